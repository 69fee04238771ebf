/**
 * A small deterministic stand-in for the per-pair processor, for testing the batch logic (resumption,
 * sharding, failures, statistics) without image processing. It writes real .npy files whose values are
 * a fixed function of the pair's measured frame, with some NaNs, and can inject failures:
 *   options.failPattern   RegExp source: pairs whose measPath matches throw
 *   options.enospcPattern RegExp source: pairs whose measPath matches write half a file, then fail
 *                         with ENOSPC (a full disk)
 *   options.delayMs       wait before writing (to kill a run mid-way)
 */
import { promises as fsp } from 'node:fs';
import path from 'node:path';
// narrow imports (not the package index): pool workers that load this start in a fraction of a second
import { encodeNpy } from '../../packages/core/src/batch/npyArray.js';
import { createRng } from '../../packages/core/src/util/rng.js';

export interface FakeOptions {
  rows?: number;
  cols?: number;
  density?: boolean;
  failPattern?: string;
  enospcPattern?: string;
  delayMs?: number;
}

function seedOf(s: string): number {
  let h = 2166136261;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 16777619);
  return h >>> 0;
}

/** The fields the fake writes for a frame (exported so tests can compute expected statistics). */
export function fakeFields(measPath: string, measPage: number | undefined, o: FakeOptions): { disp: Float32Array; dens: Float32Array } {
  const rows = o.rows ?? 6;
  const cols = o.cols ?? 5;
  const rng = createRng(seedOf(`${path.basename(measPath)}#${measPage ?? ''}`));
  const disp = new Float32Array(rows * cols * 2);
  const dens = new Float32Array(rows * cols);
  for (let i = 0; i < rows * cols; i++) {
    const bad = rng.next() < 0.1;
    disp[2 * i] = bad ? NaN : 3 + rng.normal();
    disp[2 * i + 1] = bad ? NaN : -1 + 0.5 * rng.normal();
    dens[i] = rng.next() < 0.05 ? NaN : 1.2 + 0.01 * rng.normal();
  }
  return { disp, dens };
}

export async function processPair(
  job: { refPath: string; measPath: string; refPage?: number; measPage?: number; options: Record<string, unknown> },
  outDir: string,
): Promise<Record<string, unknown>> {
  const o = job.options as FakeOptions;
  if (o.delayMs) await new Promise((r) => setTimeout(r, o.delayMs));
  if (o.failPattern && new RegExp(o.failPattern).test(job.measPath)) throw new Error(`injected failure for ${path.basename(job.measPath)}`);
  const rows = o.rows ?? 6;
  const cols = o.cols ?? 5;
  const { disp, dens } = fakeFields(job.measPath, job.measPage, o);
  if (o.enospcPattern && new RegExp(o.enospcPattern).test(job.measPath)) {
    await fsp.writeFile(path.join(outDir, 'displacement.npy'), encodeNpy(disp, [rows, cols, 2]).subarray(0, 40));
    throw Object.assign(new Error(`ENOSPC: no space left on device, write`), { code: 'ENOSPC' });
  }
  await fsp.writeFile(path.join(outDir, 'displacement.npy'), encodeNpy(disp, [rows, cols, 2]));
  if (o.density !== false) await fsp.writeFile(path.join(outDir, 'density.npy'), encodeNpy(dens, [rows, cols]));
  await fsp.writeFile(path.join(outDir, 'result.json'), JSON.stringify({ rows, cols }) + '\n');
  return { rows, cols, valid: disp.filter(Number.isFinite).length / 2 };
}
