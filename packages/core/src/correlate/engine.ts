/**
 * The unchecked kernels of the displacement engine, run over chunks (row ranges) by the calling thread
 * and by worker threads alike. All arrays may live in SharedArrayBuffers; a task carries only typed
 * arrays and numbers, so posting it to a worker shares memory instead of copying it.
 * Internal to the correlate stage.
 */
import { LineScratch, prefilterCols, prefilterRows, sampleBspline } from './bspline.js';
import { keysRow, sampleKeys } from './keysCubic.js';
import { lanczos4Row, sampleLanczos4 } from './lanczos.js';
import { createSimdKernels, type SimdKernels } from './simdKernels.js';
import { DirectWindowCorrelator } from './directCorrelator.js';
import { FftWindowCorrelator, type CorrelationOutputs } from './fftCorrelator.js';
import { axisTaps, predictorRows, type GridAxis } from './predictor.js';

/** Images of one measurement. */
export interface EngineImages {
  width: number;
  height: number;
  /** Reference and measurement images as given (no mask applied). */
  ref: Float32Array;
  meas: Float32Array;
  /** Cubic B-spline coefficients of ref and meas. */
  coefRef: Float32Array;
  coefMeas: Float32Array;
  /** Deformed images of the current pass (NaN outside the image and where masked). */
  defRef: Float32Array;
  defMeas: Float32Array;
  /** 1 = use; null when no mask. */
  mask: Uint8Array | null;
  /** 2×2-binned ref and meas (floor(width/2) × floor(height/2)), for the coarse pass. */
  binRef: Float32Array;
  binMeas: Float32Array;
}

export interface BinTask {
  op: 'bin';
}

export interface PrefilterTask {
  op: 'prefilterRows' | 'prefilterCols';
}

export interface DeformTask {
  op: 'deform';
  /** Image interpolator: Lanczos-4 on the images, or cubic B-spline on the prefiltered coefficients. */
  interpolation: 'lanczos4' | 'bspline3' | 'keys';
  /** Predictor interpolated along x for every grid row (rows × width), px. */
  predX: Float32Array;
  predY: Float32Array;
  /** Grid rows axis (y of window centres). */
  ay: GridAxis;
}

export interface CorrelateTask {
  op: 'correlate';
  /** 'binned': the 2×2-binned images (grid and window in binned pixels). */
  source: 'original' | 'deformed' | 'binned';
  /**
   * 'fft': whole (circular) correlation plane of equal windows; 'direct': lags ≤ 2 px (recentred once) with FFT fallback
   * (deformed passes); 'offset': FFT, then again with the measurement window moved by the whole-pixel
   * displacement (discrete window offset; for a pass on undeformed images at the final window size).
   */
  method: 'fft' | 'direct' | 'offset';
  windowPx: number;
  cols: number;
  rows: number;
  /** Top-left pixel of window (0, 0), and window spacing, px. */
  left: number;
  top: number;
  stepPx: number;
  /** 1 = correlate this window, 0 = skip (masked); length cols × rows. */
  active: Uint8Array;
  /** Minimum number of finite pixels per window. */
  minPixels: number;
  out: CorrelationOutputs;
}

/**
 * Grey-value statistics of both input images for the texture check, per chunk of rows: chunk k
 * writes `out[3k]` = Σ(v − s), `out[3k + 1]` = Σ(v − s)² with s the image's first pixel (shifted
 * sums keep the precision of a two-pass variance for images far from zero), and `out[3k + 2]` = index
 * of the chunk's first non-finite pixel, or −1. Chunks of the reference come first.
 */
export interface StatsTask {
  op: 'stats';
  out: Float64Array;
}

/** The predictor of a deformation pass interpolated along x (see predictorRows), per chunk of grid rows. */
export interface PredictorRowsTask {
  op: 'predictorRows';
  /** Previous pass's field (cols × rows of the grid `ax` × `rows`), px. */
  gx: Float32Array;
  gy: Float32Array;
  ax: GridAxis;
  rows: number;
  /** Outputs, rows × image width. */
  predX: Float32Array;
  predY: Float32Array;
}

export type EngineTask = PrefilterTask | DeformTask | CorrelateTask | BinTask | StatsTask | PredictorRowsTask;

/** Rows (or columns, or grid rows) per chunk of each stage. */
export const CHUNK = { prefilterRows: 64, prefilterCols: 64, deform: 32, correlate: 1, bin: 64, stats: 64, predictorRows: 8 } as const;

/** Number of chunks of a task. */
export function chunkCount(img: EngineImages, task: EngineTask): number {
  switch (task.op) {
    case 'prefilterRows':
      return 2 * Math.ceil(img.height / CHUNK.prefilterRows);
    case 'prefilterCols':
      return 2 * Math.ceil(img.width / CHUNK.prefilterCols);
    case 'deform':
      return Math.ceil(img.height / CHUNK.deform);
    case 'correlate':
      return Math.ceil(task.rows / CHUNK.correlate);
    case 'bin':
      return 2 * Math.ceil((img.height >> 1) / CHUNK.bin);
    case 'stats':
      return 2 * Math.ceil(img.height / CHUNK.stats);
    case 'predictorRows':
      return Math.ceil(task.rows / CHUNK.predictorRows);
  }
}

/**
 * The scratch of one thread of one engine: correlators per window size, the SIMD kernels' instance
 * and memory, and small per-row arrays. The calling thread of each {@link DisplacementEngine} owns
 * one, each worker thread (which belongs to one engine's pool) owns one; a chunk uses it from start
 * to end without awaiting, so no two measurements ever write the same scratch.
 */
export class EngineWorkspace {
  private readonly ffts = new Map<number, FftWindowCorrelator>();
  private readonly directs = new Map<number, DirectWindowCorrelator>();
  private kernels: SimdKernels | null | undefined;
  readonly tapIdx = new Int32Array(4);
  readonly tapW = new Float64Array(4);
  readonly tapTmp = new Float64Array(4);
  /** Per-row half predictor (x and y) of the deformation, px. */
  rowHx = new Float64Array(0);
  rowHy = new Float64Array(0);
  readonly prefilter = new LineScratch();
  /** Results of the second correlation of the discrete window offset (two windows). */
  readonly second: CorrelationOutputs = { dx: new Float32Array(2), dy: new Float32Array(2), correlation: new Float32Array(2), peakRatio: new Float32Array(2) };
  readonly offsets = new Int32Array(4);

  /** This workspace's SIMD kernels (own instance and memory), or null (TypeScript kernels). */
  simd(): SimdKernels | null {
    if (this.kernels === undefined) this.kernels = createSimdKernels();
    return this.kernels;
  }

  fft(n: number): FftWindowCorrelator {
    let c = this.ffts.get(n);
    if (!c) this.ffts.set(n, (c = new FftWindowCorrelator(n)));
    return c;
  }

  direct(n: number): DirectWindowCorrelator {
    let c = this.directs.get(n);
    if (!c) this.directs.set(n, (c = new DirectWindowCorrelator(n, this.simd())));
    return c;
  }

  /** Bytes of the SIMD kernels' memory (0 without them). */
  get simdBytes(): number {
    return this.kernels ? this.kernels.k.memory.buffer.byteLength : 0;
  }
}

/**
 * Run chunk `k` of a task with the scratch of workspace `ws` (the engine passes its own; without one,
 * a fresh workspace is made for this chunk alone — slower, for tests and direct use).
 */
export function runChunk(img: EngineImages, task: EngineTask, k: number, ws: EngineWorkspace = new EngineWorkspace()): void {
  const { width, height } = img;
  switch (task.op) {
    case 'prefilterRows': {
      const per = Math.ceil(height / CHUNK.prefilterRows);
      const second = k >= per;
      const y0 = (second ? k - per : k) * CHUNK.prefilterRows;
      prefilterRows(second ? img.meas : img.ref, second ? img.coefMeas : img.coefRef, width, y0, Math.min(height, y0 + CHUNK.prefilterRows), ws.prefilter);
      return;
    }
    case 'prefilterCols': {
      const per = Math.ceil(width / CHUNK.prefilterCols);
      const second = k >= per;
      const x0 = (second ? k - per : k) * CHUNK.prefilterCols;
      prefilterCols(second ? img.coefMeas : img.coefRef, width, height, x0, Math.min(width, x0 + CHUNK.prefilterCols), ws.prefilter);
      return;
    }
    case 'deform': {
      const y0 = k * CHUNK.deform;
      const y1 = Math.min(height, y0 + CHUNK.deform);
      deformRows(img, task, y0, y1, ws);
      return;
    }
    case 'bin': {
      const hb = height >> 1;
      const wb = width >> 1;
      const per = Math.ceil(hb / CHUNK.bin);
      const second = k >= per;
      const src = second ? img.meas : img.ref;
      const dst = second ? img.binMeas : img.binRef;
      const y0 = (second ? k - per : k) * CHUNK.bin;
      const y1 = Math.min(hb, y0 + CHUNK.bin);
      for (let y = y0; y < y1; y++) {
        const a = 2 * y * width;
        const b = a + width;
        const o = y * wb;
        for (let x = 0; x < wb; x++) dst[o + x] = 0.25 * (src[a + 2 * x]! + src[a + 2 * x + 1]! + src[b + 2 * x]! + src[b + 2 * x + 1]!);
      }
      return;
    }
    case 'correlate': {
      const r0 = k * CHUNK.correlate;
      const r1 = Math.min(task.rows, r0 + CHUNK.correlate);
      correlateRows(img, task, r0, r1, ws);
      return;
    }
    case 'predictorRows': {
      const r0 = k * CHUNK.predictorRows;
      predictorRows(task.gx, task.gy, task.ax, task.rows, width, task.predX, task.predY, r0, Math.min(task.rows, r0 + CHUNK.predictorRows));
      return;
    }
    case 'stats': {
      const per = Math.ceil(height / CHUNK.stats);
      const second = k >= per;
      const y0 = (second ? k - per : k) * CHUNK.stats;
      shiftedSums(second ? img.meas : img.ref, y0 * width, Math.min(height, y0 + CHUNK.stats) * width, task.out, 3 * k);
      return;
    }
  }
}

/** Σ(v − d[0]) and Σ(v − d[0])² over d[i0..i1) into out[o], out[o + 1]; first non-finite index (or −1) into out[o + 2]. */
function shiftedSums(d: Float32Array, i0: number, i1: number, out: Float64Array, o: number): void {
  const s = d[0]!;
  // four partial sums: independent additions run side by side
  let a0 = 0;
  let a1 = 0;
  let q0 = 0;
  let q1 = 0;
  let i = i0;
  for (; i + 1 < i1; i += 2) {
    const a = d[i]! - s;
    const b = d[i + 1]! - s;
    // v − v is 0 for a finite value, NaN for ±Infinity and NaN
    if (a - a + (b - b) !== 0) break;
    a0 += a;
    a1 += b;
    q0 += a * a;
    q1 += b * b;
  }
  let bad = -1;
  for (; i < i1; i++) {
    const a = d[i]! - s;
    if (a - a !== 0) {
      bad = i;
      break;
    }
    a0 += a;
    q0 += a * a;
  }
  out[o] = a0 + a1;
  out[o + 1] = q0 + q1;
  out[o + 2] = bad;
}

/**
 * Symmetric window deformation of rows y0..y1−1: with the predictor p(x, y) interpolated to the pixel,
 * the deformed reference is ref(x − p/2) and the deformed measurement meas(x + p/2), both sampled from
 * a high-order interpolator (Scarano 2002, Meas. Sci. Technol. 13:R1, central difference image correction).
 */
function deformRows(img: EngineImages, t: DeformTask, y0: number, y1: number, ws: EngineWorkspace): void {
  if (t.interpolation !== 'bspline3') {
    const K = ws.simd();
    if (K) {
      deformRowsSimd(img, t, y0, y1, K, ws);
      return;
    }
  }
  const { tapIdx, tapW, tapTmp } = ws;
  const { width, height, ref, meas, coefRef, coefMeas, defRef, defMeas, mask } = img;
  const { predX, predY } = t;
  if (ws.rowHx.length < width) {
    ws.rowHx = new Float64Array(width);
    ws.rowHy = new Float64Array(width);
  }
  const hxs = ws.rowHx;
  const hys = ws.rowHy;
  for (let y = y0; y < y1; y++) {
    axisTaps(t.ay, y, tapIdx, tapW, 0, tapTmp);
    const r0 = tapIdx[0]! * width;
    const r1 = tapIdx[1]! * width;
    const r2 = tapIdx[2]! * width;
    const r3 = tapIdx[3]! * width;
    const w0 = tapW[0]!;
    const w1 = tapW[1]!;
    const w2 = tapW[2]!;
    const w3 = tapW[3]!;
    const o = y * width;
    for (let x = 0; x < width; x++) {
      hxs[x] = 0.5 * (w0 * predX[r0 + x]! + w1 * predX[r1 + x]! + w2 * predX[r2 + x]! + w3 * predX[r3 + x]!);
      hys[x] = 0.5 * (w0 * predY[r0 + x]! + w1 * predY[r1 + x]! + w2 * predY[r2 + x]! + w3 * predY[r3 + x]!);
    }
    let nan: boolean;
    if (t.interpolation === 'lanczos4') {
      nan = lanczos4Row(ref, width, height, y, hxs, hys, -1, defRef, o);
      nan = lanczos4Row(meas, width, height, y, hxs, hys, 1, defMeas, o) || nan;
    } else if (t.interpolation === 'keys') {
      nan = keysRow(ref, width, height, y, hxs, hys, -1, defRef, o);
      nan = keysRow(meas, width, height, y, hxs, hys, 1, defMeas, o) || nan;
    } else {
      nan = false;
      for (let x = 0; x < width; x++) {
        const k = o + x;
        const a = (defRef[k] = sampleBspline(coefRef, width, height, x - hxs[x]!, y - hys[x]!));
        const b = (defMeas[k] = sampleBspline(coefMeas, width, height, x + hxs[x]!, y + hys[x]!));
        if (!(a === a) || !(b === b)) nan = true;
      }
    }
    // a pixel missing in either image (or masked) is dropped from both, so both windows keep the same
    // pixel set
    if (nan || mask)
      for (let k = o; k < o + width; k++)
        if ((mask && !mask[k]) || !(defRef[k]! === defRef[k]!) || !(defMeas[k]! === defMeas[k]!)) defRef[k] = defMeas[k] = NaN;
  }
}

/**
 * {@link deformRows} with the SIMD kernels (Lanczos-4 or Keys): the half predictor of the chunk's rows
 * is written to the kernels' memory, the image rows the kernels reach are copied in, and the deformed
 * rows copied out; positions whose kernel leaves the image are evaluated by the TypeScript samplers
 * (border rules). Same results as the TypeScript path to single precision.
 */
function deformRowsSimd(img: EngineImages, t: DeformTask, y0: number, y1: number, K: SimdKernels, ws: EngineWorkspace): void {
  const { tapIdx, tapW, tapTmp } = ws;
  const { width, height, ref, meas, defRef, defMeas, mask } = img;
  const { predX, predY } = t;
  const lanczos = t.interpolation === 'lanczos4';
  const k = K.k;
  const plane = (y1 - y0) * width;
  // predictor rows the chunk's rows interpolate between (taps are monotonic in y)
  axisTaps(t.ay, y0, tapIdx, tapW, 0, tapTmp);
  const g0 = tapIdx[0]!;
  axisTaps(t.ay, y1 - 1, tapIdx, tapW, 0, tapTmp);
  const g1 = tapIdx[3]! + 1;
  const gp = (g1 - g0) * width;
  // scratch (bytes): min/max (16), hx, hy, outRef, outMeas (f32 planes), predictor rows X then Y,
  // then the two source bands
  const hxAt = K.scratch(16 + plane * 16 + gp * 8) + 16;
  const mmAt = hxAt - 16;
  const hyAt = hxAt + plane * 4;
  const outRef = hyAt + plane * 4;
  const outMeas = outRef + plane * 4;
  const pxAt = outMeas + plane * 4;
  const pyAt = pxAt + gp * 4;
  K.f32.set(predX.subarray(g0 * width, g1 * width), pxAt / 4);
  K.f32.set(predY.subarray(g0 * width, g1 * width), pyAt / 4);
  let lo = Infinity;
  let hi = -Infinity;
  for (let y = y0; y < y1; y++) {
    axisTaps(t.ay, y, tapIdx, tapW, 0, tapTmp);
    const o = (y - y0) * width * 4;
    const r = pxAt - g0 * width * 4;
    const w4 = width * 4;
    k.half_pred(r + tapIdx[0]! * w4, r + tapIdx[1]! * w4, r + tapIdx[2]! * w4, r + tapIdx[3]! * w4, gp * 4, tapW[0]!, tapW[1]!, tapW[2]!, tapW[3]!, width, hxAt + o, hyAt + o, mmAt);
    const a = K.f32[mmAt / 4]!;
    const b = K.f32[mmAt / 4 + 1]!;
    if (!(a <= b)) (lo = -height), (hi = height); // NaN somewhere: take every row
    if (a < lo) lo = a;
    if (b > hi) hi = b;
  }
  // source rows reached: y ± h with kernel rows −3 … +4 (Lanczos-4; Keys needs −1 … +2)
  const band = (s: number): [number, number] => {
    const a = Math.max(0, Math.floor(Math.min(y0 + s * lo, y0 + s * hi)) - 3);
    const b = Math.min(height, Math.floor(Math.max(y1 - 1 + s * lo, y1 - 1 + s * hi)) + 5);
    return a < b ? [a, b] : [0, 0];
  };
  const [ra, rb] = band(-1);
  const [ma, mb] = band(1);
  const listR = pyAt + gp * 4; // x of the pixels a kernel left unevaluated (i32, ≤ width each)
  const listM = listR + width * 4;
  const srcRef = listM + width * 4;
  const srcMeas = srcRef + (rb - ra) * width * 4;
  K.scratch(srcMeas + (mb - ma) * width * 4 - mmAt);
  const f32 = K.f32;
  const i32 = new Int32Array(f32.buffer, listR, 2 * width);
  f32.set(ref.subarray(ra * width, rb * width), srcRef / 4);
  f32.set(meas.subarray(ma * width, mb * width), srcMeas / 4);
  const sample = lanczos ? sampleLanczos4 : sampleKeys;
  for (let y = y0; y < y1; y++) {
    const i = (y - y0) * width * 4;
    const badR = lanczos
      ? k.lanczos4_row(K.lanczosTable, srcRef, ra, width, height, y, hxAt + i, hyAt + i, -1, outRef + i, listR)
      : k.keys_row(srcRef, ra, width, height, y, hxAt + i, hyAt + i, -1, outRef + i, listR);
    const badM = lanczos
      ? k.lanczos4_row(K.lanczosTable, srcMeas, ma, width, height, y, hxAt + i, hyAt + i, 1, outMeas + i, listM)
      : k.keys_row(srcMeas, ma, width, height, y, hxAt + i, hyAt + i, 1, outMeas + i, listM);
    // kernels reaching beyond the image: the TypeScript samplers' border rules; a pixel missing in
    // either image is dropped from both, so both windows keep the same pixel set (images are finite,
    // so only these pixels can be missing)
    for (let j = 0; j < badR + badM; j++) {
      const x = j < badR ? i32[j]! : i32[width + j - badR]!;
      const q = i / 4 + x;
      const h = f32[hxAt / 4 + q]!;
      const v = f32[hyAt / 4 + q]!;
      const r = outRef / 4 + q;
      const m = outMeas / 4 + q;
      if (!(f32[r]! === f32[r]!)) f32[r] = sample(ref, width, height, x - h, y - v);
      if (!(f32[m]! === f32[m]!)) f32[m] = sample(meas, width, height, x + h, y + v);
      if (!(f32[r]! === f32[r]!) || !(f32[m]! === f32[m]!)) f32[r] = f32[m] = NaN;
    }
  }
  defRef.set(f32.subarray(outRef / 4, outRef / 4 + plane), y0 * width);
  defMeas.set(f32.subarray(outMeas / 4, outMeas / 4 + plane), y0 * width);
  if (mask)
    for (let q = y0 * width; q < y1 * width; q++) if (!mask[q]) defRef[q] = defMeas[q] = NaN;
}

function correlateRows(img: EngineImages, t: CorrelateTask, r0: number, r1: number, ws: EngineWorkspace): void {
  const A = t.source === 'original' ? img.ref : t.source === 'binned' ? img.binRef : img.defRef;
  const B = t.source === 'original' ? img.meas : t.source === 'binned' ? img.binMeas : img.defMeas;
  const width = t.source === 'binned' ? img.width >> 1 : img.width;
  const height = t.source === 'binned' ? img.height >> 1 : img.height;
  if (t.method === 'offset') correlateRowsOffset(A, B, width, height, t, r0, r1, ws);
  else correlateRowsPlain(A, B, width, height, t, r0, r1, ws);
}

/** FFT (or lag-limited direct) correlation of equal windows at the same place in A and B. */
function correlateRowsPlain(A: Float32Array, B: Float32Array, width: number, height: number, t: CorrelateTask, r0: number, r1: number, ws: EngineWorkspace): void {
  const cor = ws.fft(t.windowPx);
  const dir = t.method === 'direct' ? ws.direct(t.windowPx) : null;
  const { cols, out, active } = t;
  let pending = -1;
  // with the SIMD kernels, each row of windows is copied into their memory as one strip per image
  const K = dir?.simd ? ws.simd() : null;
  for (let r = r0; r < r1; r++) {
    const y0 = t.top + r * t.stepPx;
    let strip = -1;
    if (K) {
      const n = t.windowPx * width;
      strip = K.scratch(8 * n);
      K.f32.set(A.subarray(y0 * width, y0 * width + n), strip / 4);
      K.f32.set(B.subarray(y0 * width, y0 * width + n), strip / 4 + n);
    }
    for (let c = 0; c < cols; c++) {
      const k = c + r * cols;
      if (!active[k]) {
        out.dx[k] = out.dy[k] = out.correlation[k] = out.peakRatio[k] = NaN;
        continue;
      }
      const x0 = t.left + c * t.stepPx;
      if (dir && (strip >= 0 ? dir.runStrip(strip, strip + 4 * t.windowPx * width, width, x0, t.minPixels, out, k) : dir.run(A, B, width, height, x0, y0, t.minPixels, out, k))) continue;
      const slot = pending < 0 ? 0 : 1;
      const got = cor.load(slot, A, B, width, x0, y0);
      if (got < t.minPixels) {
        out.dx[k] = out.dy[k] = out.correlation[k] = out.peakRatio[k] = NaN;
        continue;
      }
      if (slot === 0) pending = k;
      else {
        cor.run(out, pending, k);
        pending = -1;
      }
    }
  }
  if (pending >= 0) cor.run(out, pending, -1);
}

/**
 * Discrete window offset (J. Westerweel, D. Dabiri & M. Gharib, "The effect of a discrete window offset on
 * the accuracy of cross-correlation analysis of digital PIV recordings", Exp. Fluids 23:20–28, 1997;
 * recalled from memory): each window pair is
 * correlated as usual, then the measurement window is moved by the whole-pixel part of the result and
 * the pair correlated again; the offset plus the second (sub-pixel) result is the displacement. The
 * second correlation has no loss of pairs from the whole-pixel part of the displacement. Where the
 * second peak is not within 1 px of lag 0 the first result stands.
 */
function correlateRowsOffset(A: Float32Array, B: Float32Array, width: number, height: number, t: CorrelateTask, r0: number, r1: number, ws: EngineWorkspace): void {
  correlateRowsPlain(A, B, width, height, { ...t, method: 'fft' }, r0, r1, ws);
  const cor = ws.fft(t.windowPx);
  const { second, offsets } = ws;
  const { cols, out, active } = t;
  const slots: number[] = [];
  const flush = (): void => {
    cor.run(second, 0, slots.length > 1 ? 1 : -1);
    for (let s = 0; s < slots.length; s++) {
      const k = slots[s]!;
      const ex = second.dx[s]!;
      const ey = second.dy[s]!;
      if (ex === ex && Math.abs(ex) <= 1 && Math.abs(ey) <= 1) {
        out.dx[k] = offsets[2 * s]! + ex;
        out.dy[k] = offsets[2 * s + 1]! + ey;
        out.correlation[k] = second.correlation[s]!;
        out.peakRatio[k] = second.peakRatio[s]!;
      }
    }
    slots.length = 0;
  };
  for (let r = r0; r < r1; r++) {
    const y0 = t.top + r * t.stepPx;
    for (let c = 0; c < cols; c++) {
      const k = c + r * cols;
      const dx = out.dx[k]!;
      if (!active[k] || !(dx === dx)) continue;
      const ox = Math.round(dx);
      const oy = Math.round(out.dy[k]!);
      if (ox === 0 && oy === 0) continue;
      const x0 = t.left + c * t.stepPx;
      const slot = slots.length as 0 | 1;
      if (cor.loadOffset(slot, A, B, width, height, x0, y0, ox, oy) < t.minPixels) continue;
      offsets[2 * slot] = ox;
      offsets[2 * slot + 1] = oy;
      slots.push(k);
      if (slots.length === 2) flush();
    }
  }
  if (slots.length) flush();
}
