/**
 * The working set (peak resident memory) of measuring one pair, estimated from the image headers and
 * the settings alone, so that work that cannot fit is refused before any pixel is decoded.
 *
 * What is counted, from the code (n = pixels of one image, b = bytes per sample, N = final vectors):
 * - decoding: sharp's grey output buffer per image (n·b; the decoder itself streams rows) — both images
 *   load at once; the Float32 images (2 × 4n);
 * - measureDisplacement's image buffers that a run writes: the two deformed images (8n, when a pass
 *   deforms or a mask is given), the cubic B-spline coefficients (8n, `bspline3` only), the 2×2-binned
 *   pair of a coarse first pass (2n), with worker threads the shared copies of both images (8n), the
 *   mask copy (n) with the loaded mask (n + its decode n) and its summed-area table (8 per pixel);
 * - per-vector arrays of every pass (dx, dy, correlation, peak ratio, lag-limited residuals, the FFT
 *   plane's re-check of flagged vectors, active/flagged bytes, the predictor: 51 bytes per vector of
 *   the pass) and the result (17 bytes per vector), the predictor rows (8 bytes per pixel of each
 *   predictor row: 8·width per grid row of the previous pass);
 * - per thread the SIMD kernels' memory (strip of window rows: 8·window·width bytes, deformation chunk
 *   about 900·width bytes, whichever is larger) and, per worker thread, its runtime;
 * - writing the results, reconstructing density: measured per vector (see the constants).
 *
 * Calibration (Node 20, Linux, `rhofield displacement`, peak RSS from getrusage): 2048² 16-bit pair
 * 291 MB with 1 thread, 386 MB with 2; 3072²: 414 / 544 MB; 640×480 at step 1 (290k vectors): 328 MB;
 * 1024² at step 2 (255k vectors): 352 MB; `rhofield density` 640×480 at step 1: 597 MB. The estimate
 * lies within 15 % of these (tests/correlate/estimateMemory.test.ts checks a factor 1.5). Since the
 * single-pair commands load fewer modules, read the images into shared memory and free them before
 * writing, their peaks are lower (2048²: 189–226 MiB with 1 thread, 202–219 MiB with 2): the process
 * constant is recalibrated on those; with 2 threads the estimate now errs high (no image copies).
 */
import { invalidParameter } from '../util/errors.js';
import { availableCores } from './capThreads.js';
import { buildSchedule } from './schedule.js';

/**
 * Resident memory of the CLI process beyond the pair's own arrays (runtime, sharp and its threads, modules,
 * figure rendering), calibrated on the peak RSS of `rhofield displacement`: 148 MB for a 256² pair at
 * step 2, 189–226 MiB for a 2048² pair with 1 thread (the single-pair commands load only the modules they
 * need and free the images before writing); taken as 160 MiB.
 */
export const CLI_PROCESS_BYTES = 160 * 2 ** 20;
/** Runtime of one displacement worker thread (isolate, loader, modules), measured: 38–40 MB. */
export const WORKER_THREAD_BYTES = 40 * 2 ** 20;
/**
 * Writing the default outputs (CSV lines, .npy, figures, result.json), per vector, measured: 423 and
 * 514 bytes at 290k and 255k vectors; taken as 500.
 */
export const OUTPUT_BYTES_PER_VECTOR = 500;
/** Density reconstruction and its outputs, per vector, measured: 930 bytes at 290k vectors; taken as 1000. */
export const DENSITY_BYTES_PER_VECTOR = 1000;

/** What {@link estimateMemory} needs: image header facts and the measurement settings. */
export interface MemoryEstimateInput {
  /** Size of one image (one page), px. */
  width: number;
  height: number;
  /** Bits per sample of the file: 8 or 16 (default 16). */
  bitDepth?: number;
  windowPx?: number;
  stepPx?: number;
  passes?: number;
  /** Threads as given to measureDisplacement (default as there: cores for ≥ 1 Mpx, else 1; capped at the cores). */
  threads?: number;
  interpolation?: 'lanczos4' | 'bspline3';
  masked?: boolean;
  /** Density is reconstructed too (default false). */
  density?: boolean;
  /** Result files are written (CLI; default true). */
  outputs?: boolean;
  /** Memory of the process before the pair (default {@link CLI_PROCESS_BYTES}; 0 to count the pair alone). */
  processBytes?: number;
}

/** The estimate: total bytes and its parts. */
export interface MemoryEstimate {
  bytes: number;
  /** Final vectors (cols × rows). */
  vectors: number;
  cols: number;
  rows: number;
  threads: number;
  parts: { process: number; threads: number; images: number; engine: number; mask: number; vectors: number; outputs: number; density: number };
}

function gridCount(size: number, window: number, step: number): number {
  return size >= window ? Math.floor((size - window) / step) + 1 : 0;
}

/**
 * Estimate the peak resident memory of measuring (and optionally reconstructing and writing) one
 * pair, without reading any pixel. See the module comment for what is counted and the calibration.
 * @throws RhofieldError (usage) for a non-positive size.
 */
export function estimateMemory(o: MemoryEstimateInput): MemoryEstimate {
  const { width, height } = o;
  if (!(Number.isInteger(width) && width > 0 && Number.isInteger(height) && height > 0)) throw invalidParameter('width/height', 'positive integers (px)', `${width}×${height}`);
  const n = width * height;
  const b = (o.bitDepth ?? 16) > 8 ? 2 : 1;
  const W = o.windowPx ?? 32;
  const step = o.stepPx ?? Math.max(1, W / 2);
  const masked = o.masked ?? false;
  const threads = Math.min(availableCores(), o.threads ?? (n >= 1_000_000 ? availableCores() : 1));
  const schedule = buildSchedule({ windowPx: W, stepPx: step, passes: o.passes ?? 3, width, height, hasMask: masked });
  const deforming = schedule.some((p) => p.deform) || masked;

  let vectorBytes = 0;
  let binned = false;
  let prevRows = 0;
  let cols = 0;
  let rows = 0;
  schedule.forEach((p, i) => {
    const bin = i === 0 && !p.deform && schedule.length > 1 && p.windowPx > W && !masked && p.stepPx % 2 === 0;
    binned ||= bin;
    const c = bin ? gridCount(width >> 1, p.windowPx / 2, p.stepPx / 2) : gridCount(width, p.windowPx, p.stepPx);
    const r = bin ? gridCount(height >> 1, p.windowPx / 2, p.stepPx / 2) : gridCount(height, p.windowPx, p.stepPx);
    vectorBytes += 51 * c * r + (p.deform ? 8 * width * prevRows : 0);
    prevRows = r;
    cols = c;
    rows = r;
  });
  const vectors = cols * rows;
  vectorBytes += 17 * vectors;

  const images = 2 * n * b + 2 * 4 * n;
  const engine = (deforming ? 8 * n : 0) + (deforming && o.interpolation === 'bspline3' ? 8 * n : 0) + (binned ? 2 * n : 0) + (threads > 1 ? 8 * n : 0);
  const mask = masked ? 3 * n + 8 * (width + 1) * (height + 1) : 0;
  const simd = Math.max(8 * W, 900) * width + 256 * 1024;
  const threadBytes = threads * simd + (threads - 1) * WORKER_THREAD_BYTES;
  const outputs = o.outputs === false ? 0 : OUTPUT_BYTES_PER_VECTOR * vectors;
  const density = o.density ? DENSITY_BYTES_PER_VECTOR * vectors : 0;
  const proc = o.processBytes ?? CLI_PROCESS_BYTES;
  const parts = { process: proc, threads: threadBytes, images, engine, mask, vectors: vectorBytes, outputs, density };
  let bytes = 0;
  for (const v of Object.values(parts)) bytes += v;
  return { bytes, vectors, cols, rows, threads, parts };
}
