/**
 * Displacement between a reference and a measurement image by multi-pass FFT cross-correlation of
 * interrogation windows with symmetric window deformation, normalized median test, optional mask and
 * camera-shake removal. See {@link describeSchedule} for the passes.
 */
import { inputError, invalidParameter } from '../util/errors.js';
import type { Field, MaskField } from '../util/field.js';
import { availableCores, capThreads } from './capThreads.js';
import { releaseDefaultBuffers, withDefaultEngine, type DisplacementEngine } from './displacementEngine.js';
import { CHUNK, chunkCount, runChunk, type CorrelateTask, type EngineImages, type EngineTask, type EngineWorkspace } from './engine.js';
import { fillHoles, normalizedMedianTest, replaceByNeighbourMedian } from './normalizedMedianTest.js';
import { predictorAt, type GridAxis } from './predictor.js';
import { buildSchedule, type PassPlan } from './schedule.js';
import { VectorStatus, type DisplacementField, type VectorGrid } from './types.js';
import { windowGrid } from './windowGrid.js';
import type { EnginePool } from './workerPool.js';

/** Options of {@link measureDisplacement}. */
export interface MeasureDisplacementOptions {
  /** Final interrogation window side, px: a power of two 16–128 (default 32). */
  windowPx?: number;
  /** Spacing of the final windows, px, integer ≥ 1 (default windowPx/2, i.e. 50 % overlap). */
  stepPx?: number;
  /** Number of passes, integer 1–12 (default 3; see describeSchedule). */
  passes?: number;
  /**
   * Pixels to use (1) or ignore (0), same size as the images; applied to both images. A window whose
   * centre pixel (x₀ + W/2, y₀ + W/2) is masked, or with fewer than half of its pixels unmasked, is
   * reported as `masked` with NaN.
   */
  mask?: MaskField;
  /** Normalized median test threshold (default 2; Westerweel & Scarano 2005). */
  medianThreshold?: number;
  /** Normalized median test noise level ε, px (default 0.1). */
  medianEpsilonPx?: number;
  /**
   * Keep vectors flagged by the median test when their correlation peak ratio is at least this
   * (default 3; `Infinity` replaces every flagged vector, the test as published). The published test
   * flags genuine vectors where the field changes by a large fraction of its amplitude from one grid
   * node to the next: a sine of 64 px wavelength sampled every 16 px has crests that differ from 6 of
   * their 8 neighbours by the full amplitude, so a 3×3 median calls every crest an outlier (measured:
   * amplitude 0.46–0.47 of the truth with the published test, 0.86–0.88 with this default). An
   * unambiguous correlation peak there is kept. The peak ratio used for this decision is always that of
   * the whole FFT correlation plane (primary / highest other local maximum), also for vectors measured
   * by lag-limited correlation (`refine: 'direct'`), whose flagged windows are correlated again for it.
   * Measured on 961 windows of two unrelated synthetic dot images (pure spurious peaks): peak ratio
   * median 1.13, 99th percentile 1.81, maximum 2.78; 90 % of genuine 32 px windows with 10 dots exceed 3
   * (common practice: 2–3 as a validity threshold).
   */
  medianKeepPeakRatio?: number;
  /**
   * Keep vectors flagged by the median test also when their normalized correlation peak (coefficient
   * at the peak, 0–1) is at least this (default 0.7; Infinity turns it off). A flagged vector is
   * therefore replaced only when its peak is both ambiguous (peak ratio < medianKeepPeakRatio) and weak.
   * Measured on synthetic pairs (2.8 px dots, 10 per 32 px window): spurious peaks between unrelated
   * images reach 0.55 (median 0.26, 99th percentile 0.42, 961 windows); genuine vectors that the median
   * test flags on a 64 px-wavelength field sampled every 16 px lie at 0.59–0.90 (median 0.76).
   */
  medianKeepCorrelation?: number;
  /**
   * Flow-free rectangle `[x0, y0, x1, y1]` in image pixels (inclusive corners): the mean displacement of
   * the valid vectors whose centres lie inside is subtracted from every vector (camera shake).
   */
  flowFreeRegionPx?: readonly [number, number, number, number];
  /**
   * Threads (calling thread + worker threads); 1 runs in-process. Default: the engine's `threads`,
   * else the number of cores for images of 1 Mpx or more, else 1 (starting the workers costs about
   * 0.6 s per engine, more than a small image takes; an engine keeps them for its later calls). More
   * threads than the machine's cores (`os.availableParallelism()`) are capped at the cores, with a
   * warning in the result's `warnings`.
   */
  threads?: number;
  /**
   * The engine whose buffers and workers to use (see {@link createDisplacementEngine}); calls on one
   * engine run one after the other. Without it, the call takes a default engine that no concurrent
   * call uses (the idle one left by an earlier call, or a new one).
   */
  engine?: DisplacementEngine;
  /**
   * Image interpolator of the window deformation: `'lanczos4'` (default; 8×8 taps, lowest bias) or
   * `'bspline3'` (cubic B-spline with prefilter, 4×4 taps: about 3× the bias on 2.5–3 px dots). Used
   * in the last pass; earlier deformation passes use Keys cubic convolution (4×4 taps), whose larger
   * bias only shifts the predictor, which the last pass corrects.
   */
  interpolation?: 'lanczos4' | 'bspline3';
  /**
   * Correlation of the deformation passes (every pass after the first): `'direct'` (default) computes
   * the correlation only at lags |u|, |v| ≤ 2 px — after deformation the residual is a small fraction
   * of a pixel; where the maximum lies 1 px off lag 0 (residual ½–1½ px) the 5 × 5 lags are computed
   * again around it, and only windows whose maximum is still off-centre fall back to the FFT plane; its peak
   * ratio compares the peak with the ring of lags at distance 2 (the median test's keep rule re-judges
   * flagged vectors on the whole FFT plane). `'fft'` uses the whole FFT plane (peak ratio against the
   * highest other local maximum anywhere). The first pass always uses the FFT plane.
   */
  refine?: 'direct' | 'fft';
  /**
   * How error messages name the two images (default `reference image` and `measurement image`); a
   * caller that loaded them from files passes e.g. `reference flat.png`, so that the textureless or
   * non-finite image is named as the user knows it without a check of the caller's own.
   */
  imageNames?: { ref?: string; meas?: string };
}

/** Per-pass report. */
export interface PassReport extends PassPlan {
  cols: number;
  rows: number;
  /** Vectors flagged by the median test in this pass. */
  outliers: number;
  /** Wall time of this pass's stages, ms. */
  ms: { deform: number; correlate: number; validate: number };
}

/** Result of {@link measureDisplacement}: the field plus how it was obtained. */
export interface DisplacementResult extends DisplacementField {
  /** Count of vectors per status. */
  counts: { valid: number; replaced: number; masked: number; failed: number };
  passes: PassReport[];
  /** Camera shake removed (mean of the flow-free region), px; absent without a region. */
  shakePx?: { dx: number; dy: number; vectors: number };
  /** Threads used. */
  threads: number;
  /** Things the caller should know (e.g. threads capped at the machine's cores); empty when none. */
  warnings: string[];
  /** Every setting used, defaults filled in (for provenance, e.g. result.json). */
  settings: DisplacementSettings;
  /** Wall times, ms: setup (copy, checks), prefilter (B-spline), passes, total. */
  timingsMs: { setup: number; prefilter: number; passes: number; total: number };
}

/** The resolved settings of a {@link measureDisplacement} call (JSON-able). */
export interface DisplacementSettings {
  windowPx: number;
  stepPx: number;
  passes: number;
  medianTest: { threshold: number; epsilonPx: number; neighbours: 8; keepPeakRatio: number | 'none (published test)'; keepCorrelation: number | 'none (published test)' };
  interpolation: 'lanczos4' | 'bspline3';
  refine: 'direct' | 'fft';
  masked: boolean;
  flowFreeRegionPx: readonly [number, number, number, number] | null;
  threads: number;
}

function isPow2(n: number): boolean {
  return Number.isInteger(n) && n > 0 && (n & (n - 1)) === 0;
}

function checkField(name: string, f: unknown): Field {
  const g = f as Field;
  if (!g || typeof g !== 'object' || !Number.isInteger(g.width) || !Number.isInteger(g.height) || !(g.data instanceof Float32Array))
    throw invalidParameter(name, 'a Field {width, height, data: Float32Array}', f);
  if (g.width < 1 || g.height < 1 || g.data.length !== g.width * g.height)
    throw invalidParameter(name, `data of length width × height`, `${g.width}×${g.height} with ${g.data.length} values`);
  return g;
}

/**
 * Refuse an image whose grey values do not vary (blank frame, lens cap) or that holds a non-finite
 * value, from per-chunk sums computed by the engine's threads (one pass over both images, split over
 * the threads, instead of two passes on the calling thread).
 */
async function checkTexture(img: EngineImages, stage: (task: EngineTask) => Promise<void>, shared: boolean, names: { ref: string; meas: string }): Promise<void> {
  const per = Math.ceil(img.height / CHUNK.stats);
  const out = sharedF64(3 * 2 * per, shared);
  await stage({ op: 'stats', out });
  const n = img.width * img.height;
  for (let im = 0; im < 2; im++) {
    const name = im === 0 ? names.ref : names.meas;
    const d = im === 0 ? img.ref : img.meas;
    let sum = 0;
    let sq = 0;
    for (let c = im * per; c < (im + 1) * per; c++) {
      const bad = out[3 * c + 2]!;
      if (bad >= 0) {
        const v = d[bad]!;
        throw inputError(`${name} has a non-finite value (${v}) at pixel (${bad % img.width}, ${Math.floor(bad / img.width)}); images must be finite counts`);
      }
      sum += out[3 * c]!;
      sq += out[3 * c + 1]!;
    }
    const mean = sum / n;
    const sd = Math.sqrt(Math.max(0, sq / n - mean * mean));
    if (!(sd > 1e-6 * Math.max(1, Math.abs(d[0]!)))) throw inputError(`${name} has no texture (standard deviation ${sd.toPrecision(3)}); check the file/exposure`);
  }
}

/** Validated options with defaults. */
interface Resolved {
  windowPx: number;
  stepPx: number;
  passes: number;
  medianThreshold: number;
  medianEpsilonPx: number;
  threads: number;
  mask: MaskField | undefined;
  keepPeakRatio: number;
  keepCorrelation: number;
  interpolation: 'lanczos4' | 'bspline3';
  refine: 'direct' | 'fft';
  region: readonly [number, number, number, number] | undefined;
  warnings: string[];
  imageNames: { ref: string; meas: string };
}

function resolve(ref: Field, meas: Field, o: MeasureDisplacementOptions, defaultThreads: number | undefined): Resolved {
  if (ref.width !== meas.width || ref.height !== meas.height)
    throw inputError(`reference image is ${ref.width}×${ref.height} px but measurement image is ${meas.width}×${meas.height} px; both images must have the same size`);
  const windowPx = o.windowPx ?? 32;
  if (!isPow2(windowPx) || windowPx < 16 || windowPx > 128)
    throw invalidParameter('windowPx', 'a power of two from 16 to 128 (px)', o.windowPx, 'use 16, 32, 64 or 128');
  if (windowPx > ref.width || windowPx > ref.height)
    throw invalidParameter('windowPx', `a window no larger than the image (${ref.width}×${ref.height} px)`, windowPx, 'use a smaller window');
  const stepPx = o.stepPx ?? windowPx / 2;
  if (!Number.isInteger(stepPx) || stepPx < 1) throw invalidParameter('stepPx', 'an integer ≥ 1 (px)', o.stepPx);
  const passes = o.passes ?? 3;
  if (!Number.isInteger(passes) || passes < 1 || passes > 12) throw invalidParameter('passes', 'an integer from 1 to 12', o.passes);
  const medianThreshold = o.medianThreshold ?? 2;
  if (typeof medianThreshold !== 'number' || !(medianThreshold > 0) || !Number.isFinite(medianThreshold))
    throw invalidParameter('medianThreshold', 'a positive number (2 is usual)', o.medianThreshold);
  const medianEpsilonPx = o.medianEpsilonPx ?? 0.1;
  if (typeof medianEpsilonPx !== 'number' || !(medianEpsilonPx >= 0) || !Number.isFinite(medianEpsilonPx))
    throw invalidParameter('medianEpsilonPx', 'a number ≥ 0 (px; 0.1 is usual)', o.medianEpsilonPx);
  const asked = o.threads ?? defaultThreads ?? (ref.width * ref.height >= 1_000_000 ? availableCores() : 1);
  if (!Number.isInteger(asked) || asked < 1 || asked > 256) throw invalidParameter('threads', 'an integer from 1 to 256', o.threads);
  const warnings: string[] = [];
  const { threads, warning } = capThreads(asked, 'threads');
  if (warning) warnings.push(warning);
  const mask = o.mask;
  if (mask !== undefined) {
    if (!mask || !(mask.data instanceof Uint8Array) || mask.data.length !== mask.width * mask.height)
      throw invalidParameter('mask', 'a MaskField {width, height, data: Uint8Array}', mask);
    if (mask.width !== ref.width || mask.height !== ref.height)
      throw inputError(`mask is ${mask.width}×${mask.height} px but the images are ${ref.width}×${ref.height} px; the mask must have the images' size`);
  }
  const region = o.flowFreeRegionPx;
  if (region !== undefined) {
    const ok = Array.isArray(region) && region.length === 4 && region.every((v) => typeof v === 'number' && Number.isFinite(v)) && region[0] <= region[2] && region[1] <= region[3];
    if (!ok) throw invalidParameter('flowFreeRegionPx', '[x0, y0, x1, y1] in image pixels with x0 ≤ x1 and y0 ≤ y1', region);
  }
  const names = o.imageNames ?? {};
  if (names === null || typeof names !== 'object' || (names.ref !== undefined && typeof names.ref !== 'string') || (names.meas !== undefined && typeof names.meas !== 'string'))
    throw invalidParameter('imageNames', '{ ref?: string, meas?: string }', o.imageNames);
  const imageNames = { ref: names.ref ?? 'reference image', meas: names.meas ?? 'measurement image' };
  const keepPeakRatio = o.medianKeepPeakRatio ?? 3;
  if (typeof keepPeakRatio !== 'number' || !(keepPeakRatio >= 1))
    throw invalidParameter('medianKeepPeakRatio', 'a number ≥ 1 (or Infinity to replace every flagged vector)', o.medianKeepPeakRatio);
  const keepCorrelation = o.medianKeepCorrelation ?? 0.7;
  if (typeof keepCorrelation !== 'number' || !(keepCorrelation > 0))
    throw invalidParameter('medianKeepCorrelation', 'a number in (0, 1] (or Infinity: off)', o.medianKeepCorrelation);
  const interpolation = o.interpolation ?? 'lanczos4';
  if (interpolation !== 'lanczos4' && interpolation !== 'bspline3')
    throw invalidParameter('interpolation', "'lanczos4' or 'bspline3'", o.interpolation);
  const refine = o.refine ?? 'direct';
  if (refine !== 'direct' && refine !== 'fft') throw invalidParameter('refine', "'direct' or 'fft'", o.refine);
  return { windowPx, stepPx, passes, medianThreshold, medianEpsilonPx, threads, mask, keepPeakRatio, keepCorrelation, interpolation, refine, region, warnings, imageNames };
}

/** What a measurement works with: its engine's buffers, workspace and workers (see DisplacementEngine). */
export interface MeasureResources {
  /** The calling thread's scratch. */
  workspace: EngineWorkspace;
  /** Four full-size work buffers, two 2×2-binned ones and a mask buffer (SharedArrayBuffers if `shared`). */
  buffers(width: number, height: number, shared: boolean): { bufs: Float32Array[]; bins: Float32Array[]; mask: Uint8Array };
  /** Two full-size buffers for copies of the input images (SharedArrayBuffers if `shared`). */
  inputs(width: number, height: number, shared: boolean): Float32Array[];
  /** A pool of `size` worker threads. */
  pool(size: number): Promise<EnginePool>;
}

/**
 * Drop the buffers that the idle default engine keeps for the next call of the same size (calls
 * with an explicit engine: `engine.releaseBuffers()`).
 */
export function releaseDisplacementBuffers(): void {
  releaseDefaultBuffers();
}

function sharedF32(n: number, shared: boolean): Float32Array {
  return shared ? new Float32Array(new SharedArrayBuffer(4 * n)) : new Float32Array(n);
}

function sharedF64(n: number, shared: boolean): Float64Array {
  return shared ? new Float64Array(new SharedArrayBuffer(8 * n)) : new Float64Array(n);
}

/**
 * Which windows of a grid to correlate: not when the pixel at (x₀ + W/2, y₀ + W/2) is masked or fewer
 * than half of the window's pixels are unmasked. Uses a summed-area table of the mask.
 */
function activeWindows(grid: VectorGrid, W: number, mask: MaskField | undefined, sat: Float64Array | null, shared: boolean): Uint8Array {
  const n = grid.cols * grid.rows;
  const active = shared ? new Uint8Array(new SharedArrayBuffer(n)) : new Uint8Array(n);
  if (!mask || !sat) return active.fill(1);
  const w1 = mask.width + 1;
  for (let r = 0; r < grid.rows; r++)
    for (let c = 0; c < grid.cols; c++) {
      const x0 = grid.xPx[c]! - (W - 1) / 2;
      const y0 = grid.yPx[r]! - (W - 1) / 2;
      const inside = sat[x0 + W + (y0 + W) * w1]! - sat[x0 + (y0 + W) * w1]! - sat[x0 + W + y0 * w1]! + sat[x0 + y0 * w1]!;
      const centre = mask.data[x0 + W / 2 + (y0 + W / 2) * mask.width]!;
      active[c + r * grid.cols] = centre && inside >= (W * W) / 2 ? 1 : 0;
    }
  return active;
}

/** Map a grid laid on the 2×2-binned image back to image pixels (binned pixel i spans pixels 2i, 2i + 1). */
function unbinGrid(g: VectorGrid, width: number, height: number): VectorGrid {
  return { cols: g.cols, rows: g.rows, xPx: g.xPx.map((x) => 2 * x + 0.5), yPx: g.yPx.map((y) => 2 * y + 0.5), imageWidth: width, imageHeight: height };
}

function summedArea(mask: MaskField): Float64Array {
  const { width, height, data } = mask;
  const w1 = width + 1;
  const s = new Float64Array(w1 * (height + 1));
  for (let y = 0; y < height; y++) {
    let row = 0;
    for (let x = 0; x < width; x++) {
      row += data[x + y * width] ? 1 : 0;
      s[x + 1 + (y + 1) * w1] = s[x + 1 + y * w1]! + row;
    }
  }
  return s;
}

/**
 * Measure the displacement field between two images (measured minus reference, +x right, +y down, px).
 *
 * Method: interrogation windows on a regular grid ({@link windowGrid}), mean-removed FFT
 * cross-correlation normalised to a correlation coefficient, three-point Gaussian sub-pixel peak
 * (Willert & Gharib 1991), multi-pass with symmetric window deformation (Scarano 2002), normalized
 * median test with replacement after each pass (Westerweel & Scarano 2005). Work is split over
 * `threads` (worker threads sharing memory; `threads: 1` runs in-process).
 *
 * @param ref reference image (counts). @param meas measurement image, same size.
 * @param options see {@link MeasureDisplacementOptions}.
 * @returns the field on the final grid with per-vector status, peak ratio and correlation value,
 *   plus per-pass reports and timings.
 * @throws RhofieldError (usage) for bad options, (input) for mismatched sizes or textureless images.
 * @example const d = await measureDisplacement(ref, meas, { windowPx: 32, passes: 3 });
 */
export async function measureDisplacement(ref: Field, meas: Field, options: MeasureDisplacementOptions = {}): Promise<DisplacementResult> {
  if (options === null || typeof options !== 'object') throw invalidParameter('options', 'an options object', options);
  const { engine, ...rest } = options;
  if (engine !== undefined) {
    if (!engine || typeof (engine as Partial<DisplacementEngine>).measure !== 'function') throw invalidParameter('engine', 'a DisplacementEngine from createDisplacementEngine()', engine);
    return engine.measure(ref, meas, rest);
  }
  return withDefaultEngine((e) => e.measure(ref, meas, rest));
}

/**
 * The measurement itself, on the buffers, workspace and workers of `res` (internal: called by
 * DisplacementEngine.measure, one call at a time per engine).
 */
export async function runMeasurement(ref: Field, meas: Field, options: MeasureDisplacementOptions, res: MeasureResources, defaultThreads: number | undefined): Promise<DisplacementResult> {
  const t0 = performance.now();
  checkField('ref', ref);
  checkField('meas', meas);
  if (options === null || typeof options !== 'object') throw invalidParameter('options', 'an options object', options);
  const o = resolve(ref, meas, options, defaultThreads);
  const { width, height } = ref;
  const schedule = buildSchedule({ ...o, width, height });
  const shared = o.threads > 1;
  const deforming = schedule.some((p) => p.deform) || o.mask !== undefined;

  // images
  const { bufs, bins, mask: maskBuf } = res.buffers(width, height, shared);
  // the workers read the images in place when they already live in shared memory (e.g. loaded with
  // loadImage's `shared` option), else from copies in the engine's shared buffers
  const inShared = (d: Float32Array): boolean => !shared || d.buffer instanceof SharedArrayBuffer;
  let refData = ref.data;
  let measData = meas.data;
  if (!inShared(refData) || !inShared(measData)) {
    const inputs = res.inputs(width, height, shared);
    if (!inShared(refData)) {
      inputs[0]!.set(ref.data);
      refData = inputs[0]!;
    }
    if (!inShared(measData)) {
      inputs[1]!.set(meas.data);
      measData = inputs[1]!;
    }
  }
  if (o.mask) maskBuf.set(o.mask.data);
  const img: EngineImages = {
    width,
    height,
    ref: refData,
    meas: measData,
    coefRef: bufs[0]!,
    coefMeas: bufs[1]!,
    defRef: bufs[2]!,
    defMeas: bufs[3]!,
    mask: o.mask ? maskBuf : null,
    binRef: bins[0]!,
    binMeas: bins[1]!,
  };
  const pool = shared ? await res.pool(o.threads - 1) : null;
  const ws = res.workspace;
  const stage = async (task: EngineTask): Promise<void> => {
    if (pool) return pool.stage(img, task, ws);
    const n = chunkCount(img, task);
    for (let k = 0; k < n; k++) runChunk(img, task, k, ws);
  };
  await checkTexture(img, stage, shared, o.imageNames);
  const sat = o.mask ? summedArea(o.mask) : null;
  const t1 = performance.now();

  if (deforming && o.interpolation === 'bspline3') {
    await stage({ op: 'prefilterRows' });
    await stage({ op: 'prefilterCols' });
  }
  const t2 = performance.now();

  const reports: PassReport[] = [];
  let prev: { grid: VectorGrid; dx: Float32Array; dy: Float32Array } | null = null;
  let last: { grid: VectorGrid; out: CorrelateTask['out']; active: Uint8Array; flagged: Uint8Array } | null = null;
  const pt = new Float64Array(2);
  for (let pi = 0; pi < schedule.length; pi++) {
    const plan = schedule[pi]!;
    const W = plan.windowPx;
    // a coarse first pass (window larger than the final one, no mask) runs on 2×2-binned images with
    // half the window: the same image area for a quarter of the work; its sub-pixel precision is
    // irrelevant to a predictor
    const binned = pi === 0 && !plan.deform && schedule.length > 1 && W > o.windowPx && !o.mask && plan.stepPx % 2 === 0;
    const grid = binned ? unbinGrid(windowGrid(width >> 1, height >> 1, W / 2, plan.stepPx / 2), width, height) : windowGrid(width, height, W, plan.stepPx);
    const n = grid.cols * grid.rows;
    const ta = performance.now();
    if (binned) await stage({ op: 'bin' });
    let source: 'original' | 'deformed' | 'binned' = binned ? 'binned' : 'original';
    let pAx: GridAxis | null = null;
    let pAy: GridAxis | null = null;
    if (plan.deform && prev) {
      const pg = prev.grid;
      pAx = { origin: pg.xPx[0]!, step: pg.cols > 1 ? pg.xPx[1]! - pg.xPx[0]! : 1, count: pg.cols };
      pAy = { origin: pg.yPx[0]!, step: pg.rows > 1 ? pg.yPx[1]! - pg.yPx[0]! : 1, count: pg.rows };
      const predX = sharedF32(pg.rows * width, shared);
      const predY = sharedF32(pg.rows * width, shared);
      await stage({ op: 'predictorRows', gx: prev.dx, gy: prev.dy, ax: pAx, rows: pg.rows, predX, predY });
      await stage({ op: 'deform', interpolation: pi === schedule.length - 1 ? o.interpolation : 'keys', predX, predY, ay: pAy });
      source = 'deformed';
    } else if (o.mask) {
      // no predictor yet: a zero deformation applies the mask (NaN) to both images
      const z = sharedF32(width, shared);
      await stage({ op: 'deform', interpolation: o.interpolation, predX: z, predY: z, ay: { origin: 0, step: 1, count: 1 } });
      source = 'deformed';
    }
    const tb = performance.now();
    const newOut = (): CorrelateTask['out'] => ({ dx: sharedF32(n, shared), dy: sharedF32(n, shared), correlation: sharedF32(n, shared), peakRatio: sharedF32(n, shared) });
    const out = newOut();
    const active = activeWindows(grid, W, o.mask, sat, shared);
    const direct = plan.deform && o.refine === 'direct';
    const correlate = (method: CorrelateTask['method'], which: Uint8Array, into: CorrelateTask['out']): Promise<void> =>
      stage({
        op: 'correlate',
        source,
        method,
        windowPx: binned ? W / 2 : W,
        cols: grid.cols,
        rows: grid.rows,
        left: binned ? (grid.xPx[0]! - (W - 1) / 2) / 2 : grid.xPx[0]! - (W - 1) / 2,
        top: binned ? (grid.yPx[0]! - (W - 1) / 2) / 2 : grid.yPx[0]! - (W - 1) / 2,
        stepPx: binned ? plan.stepPx / 2 : plan.stepPx,
        active: which,
        minPixels: binned ? (W * W) / 8 : (W * W) / 2,
        out: into,
      });
    // a pass on undeformed images at the final window size (passes 1–2) correlates each pair again with
    // the measurement window moved by the whole-pixel result (discrete window offset): the loss of
    // pairs of a large displacement otherwise dominates its random error
    const offset = !plan.deform && !binned && W === o.windowPx;
    await correlate(direct ? 'direct' : offset ? 'offset' : 'fft', active, out);
    const residualX = direct ? out.dx.slice() : null;
    const residualY = direct ? out.dy.slice() : null;
    const tc = performance.now();
    if (binned)
      for (let k = 0; k < n; k++) {
        out.dx[k] = 2 * out.dx[k]!;
        out.dy[k] = 2 * out.dy[k]!;
      }
    if (source === 'deformed' && prev && pAx && pAy) {
      for (let r = 0; r < grid.rows; r++)
        for (let c = 0; c < grid.cols; c++) {
          const k = c + r * grid.cols;
          if (!(out.dx[k]! === out.dx[k]!)) continue;
          predictorAt(prev.dx, prev.dy, pAx, pAy, grid.xPx[c]!, grid.yPx[r]!, pt);
          out.dx[k] = out.dx[k]! + pt[0]!;
          out.dy[k] = out.dy[k]! + pt[1]!;
        }
    }
    // median test and replacement (failed, unmasked windows are replaced too)
    const dxF: Field = { width: grid.cols, height: grid.rows, data: out.dx };
    const dyF: Field = { width: grid.cols, height: grid.rows, data: out.dy };
    const flagged = new Uint8Array(n);
    let outliers = normalizedMedianTest(dxF, dyF, o.medianThreshold, o.medianEpsilonPx, flagged);
    if ((o.keepPeakRatio < Infinity || o.keepCorrelation < Infinity) && direct && outliers > 0) {
      // the peak ratio of a lag-limited vector compares the peak with its own surroundings only; for
      // the keep-or-replace decision, flagged vectors are judged on the whole FFT plane
      const again = shared ? new Uint8Array(new SharedArrayBuffer(n)) : new Uint8Array(n);
      for (let k = 0; k < n; k++) again[k] = flagged[k]! & active[k]!;
      const plane = newOut();
      await correlate('fft', again, plane);
      for (let k = 0; k < n; k++) {
        if (!again[k]) continue;
        // the whole plane's highest peak elsewhere than the lag-limited one: ambiguous
        const same = Math.abs(plane.dx[k]! - residualX![k]!) <= 0.5 && Math.abs(plane.dy[k]! - residualY![k]!) <= 0.5;
        out.peakRatio[k] = same ? plane.peakRatio[k]! : 1;
        if (!same) out.correlation[k] = Math.min(out.correlation[k]!, plane.correlation[k]!);
      }
    }
    if (o.keepPeakRatio < Infinity || o.keepCorrelation < Infinity)
      for (let k = 0; k < n; k++)
        if (flagged[k] && out.peakRatio[k]! > 1 && (out.peakRatio[k]! >= o.keepPeakRatio || out.correlation[k]! >= o.keepCorrelation)) {
          flagged[k] = 0;
          outliers--;
        }
    for (let k = 0; k < n; k++) if (active[k] && !(out.dx[k]! === out.dx[k]!)) flagged[k] = 1;
    replaceByNeighbourMedian(dxF, dyF, flagged);
    for (let k = 0; k < n; k++) if (!active[k]) out.dx[k] = out.dy[k] = NaN;
    const td = performance.now();
    reports.push({ ...plan, cols: grid.cols, rows: grid.rows, outliers, ms: { deform: tb - ta, correlate: tc - tb, validate: td - tc } });
    last = { grid, out, active, flagged };
    if (pi < schedule.length - 1) {
      // in shared memory: the workers interpolate it for the next pass
      const px = sharedF32(n, shared);
      const py = sharedF32(n, shared);
      px.set(out.dx);
      py.set(out.dy);
      fillHoles(px, py, grid.cols, grid.rows);
      prev = { grid, dx: px, dy: py };
    }
  }
  const t3 = performance.now();
  const { grid, out, active, flagged } = last!;
  const n = grid.cols * grid.rows;
  const status = new Uint8Array(n);
  const counts = { valid: 0, replaced: 0, masked: 0, failed: 0 };
  for (let k = 0; k < n; k++) {
    const s = !active[k] ? VectorStatus.masked : !(out.dx[k]! === out.dx[k]!) ? VectorStatus.failed : flagged[k] ? VectorStatus.replaced : VectorStatus.valid;
    status[k] = s;
    if (s === VectorStatus.valid) counts.valid++;
    else if (s === VectorStatus.replaced) counts.replaced++;
    else if (s === VectorStatus.masked) counts.masked++;
    else counts.failed++;
  }
  const dx = Float32Array.from(out.dx);
  const dy = Float32Array.from(out.dy);
  let shakePx: DisplacementResult['shakePx'];
  if (o.region) {
    const [x0, y0, x1, y1] = o.region;
    let sx = 0;
    let sy = 0;
    let m = 0;
    for (let r = 0; r < grid.rows; r++)
      for (let c = 0; c < grid.cols; c++) {
        const k = c + r * grid.cols;
        const x = grid.xPx[c]!;
        const y = grid.yPx[r]!;
        if (status[k] === VectorStatus.valid && x >= x0 && x <= x1 && y >= y0 && y <= y1) (sx += dx[k]!), (sy += dy[k]!), m++;
      }
    if (m === 0)
      throw inputError(
        `flowFreeRegionPx [${o.region.join(', ')}] contains no valid vector centre (grid spacing ${grid.cols > 1 ? grid.xPx[1]! - grid.xPx[0]! : 0} px); enlarge the region`,
      );
    sx /= m;
    sy /= m;
    for (let k = 0; k < n; k++) {
      dx[k] = dx[k]! - sx;
      dy[k] = dy[k]! - sy;
    }
    shakePx = { dx: sx, dy: sy, vectors: m };
  }
  const f = (data: Float32Array): Field => ({ width: grid.cols, height: grid.rows, data });
  const t4 = performance.now();
  return {
    grid,
    dxPx: f(dx),
    dyPx: f(dy),
    peakRatio: f(Float32Array.from(out.peakRatio)),
    correlation: f(Float32Array.from(out.correlation)),
    status,
    counts,
    passes: reports,
    ...(shakePx ? { shakePx } : {}),
    threads: o.threads,
    warnings: o.warnings,
    settings: {
      windowPx: o.windowPx,
      stepPx: o.stepPx,
      passes: o.passes,
      medianTest: {
        threshold: o.medianThreshold,
        epsilonPx: o.medianEpsilonPx,
        neighbours: 8,
        keepPeakRatio: Number.isFinite(o.keepPeakRatio) ? o.keepPeakRatio : 'none (published test)',
        keepCorrelation: Number.isFinite(o.keepCorrelation) ? o.keepCorrelation : 'none (published test)',
      },
      interpolation: o.interpolation,
      refine: o.refine,
      masked: o.mask !== undefined,
      flowFreeRegionPx: o.region ?? null,
      threads: o.threads,
    },
    timingsMs: { setup: t1 - t0, prefilter: t2 - t1, passes: t3 - t2, total: t4 - t0 },
  };
}

/** Chunk sizes of the engine's stages (for benchmarks). */
export const ENGINE_CHUNKS = CHUNK;
