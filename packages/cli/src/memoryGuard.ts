/**
 * The memory guard of the commands that measure: the working set is estimated from the image headers
 * and the settings (core's estimateMemory) before any pixel is decoded, and work above the budget is
 * refused (exit 2) with advice. Budget: `--max-memory` (2GiB, 512MiB, 1.5GB, bytes), default half
 * of this machine's memory (os.totalmem()).
 */
import os from 'node:os';
import { formatBytes, inputError, loadImageInfo, parseByteSize, WORKER_THREAD_BYTES, type MemoryEstimate } from '@rhofield/core/pair';

/** Share of the machine's memory used as the default budget. */
export const DEFAULT_MEMORY_SHARE = 0.5;

/** Resident memory of one `batch` worker thread before its pair (runtime, pipeline modules), from the batch bench. */
export const BATCH_WORKER_BYTES = 150 * 2 ** 20;

/** The help line of `--max-memory`. */
export const MAX_MEMORY_HELP = `memory budget: 2GiB, 512MiB, 1.5GB or bytes; work estimated above it is refused before the images are decoded (default ${100 * DEFAULT_MEMORY_SHARE}% of this machine's memory, ${formatBytes(DEFAULT_MEMORY_SHARE * os.totalmem())})`;

/** The budget in bytes and how to name it in a message. */
export interface MemoryBudget {
  bytes: number;
  label: string;
}

/** Parse `--max-memory` (undefined → the default share of os.totalmem()). */
export function memoryBudget(raw: string | undefined): MemoryBudget {
  if (raw === undefined) {
    const bytes = Math.floor(DEFAULT_MEMORY_SHARE * os.totalmem());
    return { bytes, label: `the default budget ${formatBytes(bytes)} (${100 * DEFAULT_MEMORY_SHARE}% of this machine's memory; set --max-memory to change it)` };
  }
  return { bytes: parseByteSize(raw, '--max-memory'), label: `--max-memory ${raw}` };
}

/** Width, height and bit depth of the larger of the images (headers only). */
export async function imageHeaders(...files: string[]): Promise<{ width: number; height: number; bitDepth: number }> {
  const infos = await Promise.all(files.map((f) => loadImageInfo(f)));
  let width = 0;
  let height = 0;
  let bitDepth = 8;
  for (const i of infos) {
    width = Math.max(width, i.width);
    height = Math.max(height, i.height);
    bitDepth = Math.max(bitDepth, i.bitDepth);
  }
  return { width, height, bitDepth };
}

/**
 * Refuse (RhofieldError input → exit 2) when `total` exceeds the budget: one line naming what was
 * estimated, the budget as given, and what to change.
 * @param what e.g. `ref.png and meas.png (16000×16000 px)`.
 * @param e the estimate of one pair (for the advice). @param total the bytes to compare (default e.bytes).
 * @param parallel how to lower parallelism (`--threads 1`, `fewer --workers`), or null.
 * @param size image size, for the crop that would fit (everything but the process scales with the area).
 */
export function checkMemory(
  what: string,
  e: MemoryEstimate,
  budget: MemoryBudget,
  total = e.bytes,
  parallel: string | null = e.threads > 1 ? `--threads 1` : null,
  size?: { width: number; height: number },
): void {
  if (total <= budget.bytes) return;
  const p = e.parts;
  const perVector = p.vectors + p.outputs + p.density;
  const fixed = p.process + Math.max(0, e.threads - 1) * WORKER_THREAD_BYTES;
  if (budget.bytes <= fixed)
    throw inputError(`${what}: ${budget.label} is below the memory the program itself needs (about ${formatBytes(fixed)}); raise --max-memory`);
  // 3 % below the area ratio: the kernels' memory grows with the width alone
  const f = 0.97 * Math.sqrt((budget.bytes - fixed) / (total - fixed));
  const advice = [size ? `crop the images (to about ${Math.floor(f * size.width)}×${Math.floor(f * size.height)} px at these settings)` : 'crop the images'];
  if (perVector > 0.2 * (total - p.process)) advice.push('use a larger --step (fewer vectors)');
  if (parallel) advice.push(`use ${parallel}`);
  advice.push('or raise --max-memory');
  throw inputError(
    `${what}: the estimated working set is ${formatBytes(total)} (${e.cols}×${e.rows} vectors, ${e.threads} thread${e.threads === 1 ? '' : 's'}), above ${budget.label}; ${advice.join(', ')}`,
  );
}
