/**
 * Direct (spatial) cross-correlation of a window pair over the small lags |u|, |v| ≤ 2 px, for
 * deformation passes, where the residual displacement is a fraction of a pixel.
 *
 * R(u, v) = Σₓ a(x)·b(x + u) over pairs inside the window (zero padding), with a and b the reference and
 * measurement windows, each mean-removed over its finite pixels (NaN → 0). Zero padding keeps R
 * symmetric for identical windows, so a vanishing residual is measured without error (extending b
 * beyond the window instead made the estimate noisier: 0.06 px RMS against 0.005 px, measured); the
 * loss-of-pairs weighting (1 − |u|/n) is divided out before the fit. Values are divided by √(Σa²·Σb²),
 * so the peak is a correlation coefficient.
 * The 3-point Gaussian fit refines the peak; the peak ratio is primary / highest value at lag
 * distance 2 (the ring around the 3×3 neighbourhood), a local measure of peak sharpness.
 * When the maximum is not at lag 0 (residual beyond ½ px) but within ±1 px of it, the 25 lags are
 * computed again around the maximum (residuals up to about 1½ px, common after a coarse predictor);
 * when the maximum is still not at the centre of the lags computed, or lies on their border at once,
 * the caller falls back to FFT correlation of the whole window, so a far-away competing peak is
 * still seen there.
 *
 * Cost per window: 25·n² multiply–adds, against about 1.5 complex n×n FFTs for the FFT route.
 */
import type { CorrelationOutputs } from './fftCorrelator.js';
import { PEAK_RATIO_CAP } from './fftCorrelator.js';
import { gaussianPeak3 } from './gaussianPeak3.js';
import { windowSums } from './windowSums.js';
import { simdKernels, type SimdKernels } from './simdKernels.js';

/** Scratch for windowSums (one per thread; no allocation per window). */
const SUMS = new Float64Array(4);

const R = 2; // the unrolled lag loop below assumes R = 2
const L = 2 * R + 1;
/** Zero border around b: lags up to R + 1 (the lags around a maximum at ±1 px). */
const BORDER = R + 1;
const CENTRE = R * L + R;

function g(u: number, n: number): number {
  return 1 / (1 - Math.abs(u) / n);
}

export class DirectWindowCorrelator {
  readonly n: number;
  /** Mean-removed windows: a is n × n, b sits inside a zero border of BORDER pixels ((n + 2·BORDER)²). */
  private readonly a: Float64Array;
  private readonly b: Float64Array;
  /** The 5 × 5 correlation sums, lag row v at 5·v. */
  private readonly r = new Float64Array(L * L);
  /** SIMD kernels (null: TypeScript only) and byte offsets of a, b and the results in their memory. */
  private readonly K: SimdKernels | null;
  private readonly at: readonly [number, number, number] = [0, 0, 0];
  /** View of the SIMD results: sums, counts and energies (6), then the 25 lag sums. */
  private res: Float64Array = new Float64Array(0);
  private generation = -1;

  /** @param K SIMD kernels whose memory holds the windows (default: the thread's own; null: TypeScript only). */
  constructor(n: number, K: SimdKernels | null = simdKernels()) {
    if (n % 8 !== 0) throw new Error(`DirectWindowCorrelator: window ${n} px is not a multiple of 8`);
    this.n = n;
    const m = n + 2 * BORDER;
    this.a = new Float64Array(n * n);
    this.b = new Float64Array(m * m);
    this.K = K;
    if (this.K) {
      const K = this.K;
      this.at = [K.alloc(n * n * 4), K.alloc(m * m * 4), K.alloc((6 + L * L) * 8)];
      K.f32.fill(0, this.at[1] / 4, this.at[1] / 4 + m * m); // the zero border
    }
  }

  /** Whether {@link runStrip} is available (WebAssembly SIMD present). */
  get simd(): boolean {
    return this.K !== null;
  }

  /**
   * {@link run} on windows already in the SIMD kernels' memory: a strip of image rows (row stride
   * `stride` f32) of A at byte offset `stripA` and of B at `stripB`, window columns x0 … x0 + n − 1.
   */
  runStrip(stripA: number, stripB: number, stride: number, x0: number, minPixels: number, out: CorrelationOutputs, idx: number): boolean {
    const K = this.K!;
    K.k.direct_window(stripA + 4 * x0, stripB + 4 * x0, stride, this.n, this.at[0], this.at[1], this.at[2]);
    if (this.generation !== K.generation) {
      this.res = new Float64Array(K.f64.buffer, this.at[2], 6 + L * L);
      this.generation = K.generation;
    }
    const res = this.res;
    if (res[2]! < minPixels || res[3]! < minPixels || !(res[4]! > 0 && res[5]! > 0)) {
      out.dx[idx] = out.dy[idx] = out.correlation[idx] = out.peakRatio[idx] = NaN;
      return true;
    }
    this.r.set(res.subarray(6));
    return this.settle(res[4]!, res[5]!, out, idx, true);
  }

  /**
   * Correlate the window with top-left (x0, y0) of A and B (width × height images) and write the
   * result to index `idx`. @returns false when the peak lies on the lag border (use FFT instead) or the
   * window has fewer than `minPixels` finite pixels (outputs NaN, returns true).
   */
  run(A: Float32Array, B: Float32Array, width: number, height: number, x0: number, y0: number, minPixels: number, out: CorrelationOutputs, idx: number): boolean {
    const n = this.n;
    const a = this.a;
    const b = this.b;
    const m = n + 2 * BORDER;
    // means over the window's finite pixels
    windowSums(A, B, width, x0, y0, n, SUMS);
    const sa = SUMS[0]!;
    const sb = SUMS[1]!;
    const na = SUMS[2]!;
    const nb = SUMS[3]!;
    const complete = na === n * n && nb === n * n;
    if (na < minPixels || nb < minPixels) {
      out.dx[idx] = out.dy[idx] = out.correlation[idx] = out.peakRatio[idx] = NaN;
      return true;
    }
    const ma = sa / na;
    const mb = sb / nb;
    // mean-removed windows (NaN → 0); b sits inside a zero border of BORDER pixels, written once at
    // construction and never touched since
    let ea = 0;
    let eb = 0;
    let ea1 = 0;
    let eb1 = 0;
    for (let r = 0, j = 0; r < n; r++) {
      let k = x0 + (y0 + r) * width;
      let jb = (r + BORDER) * m + BORDER;
      if (complete)
        for (let c = 0; c < n; c += 2, k += 2, j += 2, jb += 2) {
          const u = A[k]! - ma;
          const w = B[k]! - mb;
          const u1 = A[k + 1]! - ma;
          const w1 = B[k + 1]! - mb;
          a[j] = u;
          b[jb] = w;
          a[j + 1] = u1;
          b[jb + 1] = w1;
          ea += u * u;
          eb += w * w;
          ea1 += u1 * u1;
          eb1 += w1 * w1;
        }
      else
        for (let c = 0; c < n; c++, k++, j++, jb++) {
          const va = A[k]!;
          const vb = B[k]!;
          const u = va === va ? va - ma : 0;
          const w = vb === vb ? vb - mb : 0;
          a[j] = u;
          b[jb] = w;
          ea += u * u;
          eb += w * w;
        }
    }
    ea += ea1;
    eb += eb1;
    if (!(ea > 0 && eb > 0)) {
      out.dx[idx] = out.dy[idx] = out.correlation[idx] = out.peakRatio[idx] = NaN;
      return true;
    }
    lagSums(a, b, n, this.r, 0, 0);
    return this.settle(ea, eb, out, idx, false);
  }

  /**
   * From the lag sums around lag 0 in this.r: the peak where the maximum is at lag 0; the lags computed
   * again around a maximum 1 px off (the same windows, with the kernel that computed them: `simd`),
   * then the peak if it is centred there; otherwise false (the FFT plane decides).
   */
  private settle(ea: number, eb: number, out: CorrelationOutputs, idx: number, simd: boolean): boolean {
    const shift = this.recentre();
    if (shift < 0) return false;
    if (shift === CENTRE) return this.peak(ea, eb, out, idx, 0, 0);
    const du = (shift % L) - R;
    const dv = Math.floor(shift / L) - R;
    if (simd) {
      this.K!.k.corr_shifted(this.at[0], this.at[1], this.n, du, dv, this.at[2] + 48);
      this.r.set(this.res.subarray(6));
    } else lagSums(this.a, this.b, this.n, this.r, du, dv);
    if (this.argmax() !== CENTRE) return false;
    return this.peak(ea, eb, out, idx, du, dv);
  }

  /** Index of the largest of the 25 lag sums in this.r. */
  private argmax(): number {
    const rr = this.r;
    let best = -Infinity;
    let bi = 0;
    for (let i = 0; i < L * L; i++) if (rr[i]! > best) (best = rr[i]!), (bi = i);
    return bi;
  }

  /**
   * Where the lags around lag 0 put the maximum: CENTRE (residual within ½ px), another index with
   * |u|, |v| ≤ 1 (compute the lags again around it), or −1 (on the border: the FFT plane decides).
   */
  private recentre(): number {
    const bi = this.argmax();
    const pu = (bi % L) - R;
    const pv = Math.floor(bi / L) - R;
    return Math.abs(pu) <= 1 && Math.abs(pv) <= 1 ? bi : -1;
  }

  /**
   * Sub-pixel fit and peak ratio of the maximum at the centre of this.r, whose lags are centred on
   * (du, dv) (energies ea, eb).
   */
  private peak(ea: number, eb: number, out: CorrelationOutputs, idx: number, du: number, dv: number): boolean {
    const n = this.n;
    const rr = this.r;
    const bi = CENTRE;
    const pu = R;
    const pv = R;
    const best = rr[bi]!;
    // loss-of-pairs weighting (1 − |u|/n) of the zero-padded windows undone before the fit
    const sx = gaussianPeak3(rr[bi - 1]! * g(du - 1, n), best * g(du, n), rr[bi + 1]! * g(du + 1, n));
    const sy = gaussianPeak3(rr[bi - L]! * g(dv - 1, n), best * g(dv, n), rr[bi + L]! * g(dv + 1, n));
    out.dx[idx] = du + sx;
    out.dy[idx] = dv + sy;
    out.correlation[idx] = best / Math.sqrt(ea * eb);
    let second = -Infinity;
    for (let i = 0; i < L * L; i++) {
      const u = i % L;
      const v = (i - u) / L;
      if (Math.abs(u - pu) <= 1 && Math.abs(v - pv) <= 1) continue;
      if (rr[i]! > second) second = rr[i]!;
    }
    // no positive correlation around the peak within ±2 px: this plane cannot judge the peak's
    // distinctness (a near-zero plane would otherwise report the cap); the whole FFT plane decides
    if (!(second > 0)) return false;
    const ratio = best / second;
    out.peakRatio[idx] = ratio > PEAK_RATIO_CAP ? PEAK_RATIO_CAP : ratio;
    return true;
  }
}

/**
 * R(du + u, dv + v) for the 5 × 5 lags u, v = −2 … 2 around (du, dv), |du|, |dv| ≤ 1 (TypeScript kernel;
 * corr25 in kernels.wat is the SIMD one).
 */
function lagSums(a: Float64Array, b: Float64Array, n: number, rr: Float64Array, du: number, dv: number): void {
  const m = n + 2 * BORDER;
  // R(u, v) for the 5 lags u of each lag row v at once, 8 columns of a per step (n is a multiple of 8)
  for (let v = 0; v < L; v++) {
    let s0 = 0;
    let s1 = 0;
    let s2 = 0;
    let s3 = 0;
    let s4 = 0;
    for (let r = 0; r < n; r++) {
      const ao = r * n;
      const bo = (r + v + BORDER - R + dv) * m + BORDER - R + du;
      for (let c = 0; c < n; c += 8) {
        const q = ao + c;
        const k = bo + c;
        const x0 = a[q]!;
        const x1 = a[q + 1]!;
        const x2 = a[q + 2]!;
        const x3 = a[q + 3]!;
        const x4 = a[q + 4]!;
        const x5 = a[q + 5]!;
        const x6 = a[q + 6]!;
        const x7 = a[q + 7]!;
        const c0 = b[k]!;
        const c1 = b[k + 1]!;
        const c2 = b[k + 2]!;
        const c3 = b[k + 3]!;
        const c4 = b[k + 4]!;
        const c5 = b[k + 5]!;
        const c6 = b[k + 6]!;
        const c7 = b[k + 7]!;
        const c8 = b[k + 8]!;
        const c9 = b[k + 9]!;
        const c10 = b[k + 10]!;
        const c11 = b[k + 11]!;
        s0 += x0 * c0 + x1 * c1 + x2 * c2 + x3 * c3 + x4 * c4 + x5 * c5 + x6 * c6 + x7 * c7;
        s1 += x0 * c1 + x1 * c2 + x2 * c3 + x3 * c4 + x4 * c5 + x5 * c6 + x6 * c7 + x7 * c8;
        s2 += x0 * c2 + x1 * c3 + x2 * c4 + x3 * c5 + x4 * c6 + x5 * c7 + x6 * c8 + x7 * c9;
        s3 += x0 * c3 + x1 * c4 + x2 * c5 + x3 * c6 + x4 * c7 + x5 * c8 + x6 * c9 + x7 * c10;
        s4 += x0 * c4 + x1 * c5 + x2 * c6 + x3 * c7 + x4 * c8 + x5 * c9 + x6 * c10 + x7 * c11;
      }
    }
    const o = v * L;
    rr[o] = s0;
    rr[o + 1] = s1;
    rr[o + 2] = s2;
    rr[o + 3] = s3;
    rr[o + 4] = s4;
  }
}
