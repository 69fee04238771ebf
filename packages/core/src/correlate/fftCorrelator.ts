/**
 * Normalised FFT cross-correlation of interrogation-window pairs, two pairs at a time.
 *
 * Packing (real-input FFT tricks, e.g. Press et al., Numerical Recipes, 3rd ed. 2007, §12.3): the two
 * real windows a (reference) and b (measurement) of one pair go into one complex array z = a + i·b;
 * after one forward 2-D FFT their spectra separate by Hermitian symmetry, A_k = (Z_k + conj Z_−k)/2,
 * B_k = (Z_k − conj Z_−k)/(2i). The cross-spectrum conj(A_k)·B_k simplifies, with p = Z_k and
 * q = Z_−k, to  Im(p·q)/2 + i·(|q|² − |p|²)/4.  Its inverse is real, so the cross-spectra of two pairs
 * are combined as C₁ + i·C₂ and share one inverse FFT: 2 forward + 1 inverse complex FFT per two pairs.
 *
 * The correlation is circular, R(u) = Σₓ a(x)·b(x + u) over the window, with both windows
 * mean-removed (over their finite pixels; NaN pixels — outside the image or masked — count as zero
 * after mean removal). Dividing by √(Σa²·Σb²) makes the peak a correlation coefficient in −1…1.
 * A peak at lag u means the measurement window's content sits at +u relative to the reference, i.e.
 * the displacement (measured minus reference) is u.
 *
 * No allocation after construction; one instance per window size and thread.
 */
import { Fft2d } from './fft2d.js';
import { gaussianPeak3 } from './gaussianPeak3.js';
import { windowSums } from './windowSums.js';

/** Scratch for windowSums (one per thread; no allocation per window). */
const SUMS = new Float64Array(4);

/** Per-vector outputs written by the correlators (row-major over the vector grid). */
export interface CorrelationOutputs {
  dx: Float32Array;
  dy: Float32Array;
  correlation: Float32Array;
  peakRatio: Float32Array;
}

/** Peak ratios are capped here (a secondary peak ≤ 0 would give infinity). */
export const PEAK_RATIO_CAP = 1000;

export class FftWindowCorrelator {
  readonly n: number;
  private readonly fft: Fft2d;
  private readonly z: [Float64Array, Float64Array];
  private readonly w: Float64Array;
  private readonly energyA = new Float64Array(2);
  private readonly energyB = new Float64Array(2);
  private readonly loaded = new Uint8Array(2);

  constructor(n: number) {
    this.n = n;
    this.fft = new Fft2d(n);
    const size = 2 * n * n;
    this.z = [new Float64Array(size), new Float64Array(size)];
    this.w = new Float64Array(size);
  }

  /**
   * Cut the window pair with top-left pixel (x0, y0) from images A and B (row stride `stride`) into
   * slot 0 or 1, mean-removed. @returns the number of pixels finite in both windows.
   */
  load(slot: 0 | 1, A: Float32Array, B: Float32Array, stride: number, x0: number, y0: number): number {
    const n = this.n;
    const z = this.z[slot];
    windowSums(A, B, stride, x0, y0, n, SUMS);
    const sa = SUMS[0]!;
    const sb = SUMS[1]!;
    const na = SUMS[2]!;
    const nb = SUMS[3]!;
    const complete = na === n * n && nb === n * n;
    const ma = na > 0 ? sa / na : 0;
    const mb = nb > 0 ? sb / nb : 0;
    let ea = 0;
    let eb = 0;
    let ea1 = 0;
    let eb1 = 0;
    let j = 0;
    for (let r = 0; r < n; r++) {
      let k = x0 + (y0 + r) * stride;
      if (complete)
        for (let c = 0; c < n; c += 2, k += 2, j += 4) {
          const va = A[k]! - ma;
          const vb = B[k]! - mb;
          const wa = A[k + 1]! - ma;
          const wb = B[k + 1]! - mb;
          z[j] = va;
          z[j + 1] = vb;
          z[j + 2] = wa;
          z[j + 3] = wb;
          ea += va * va;
          eb += vb * vb;
          ea1 += wa * wa;
          eb1 += wb * wb;
        }
      else
        for (let c = 0; c < n; c++, k++, j += 2) {
          const a = A[k]!;
          const b = B[k]!;
          const va = a === a ? a - ma : 0;
          const vb = b === b ? b - mb : 0;
          z[j] = va;
          z[j + 1] = vb;
          ea += va * va;
          eb += vb * vb;
        }
    }
    this.energyA[slot] = ea + ea1;
    this.energyB[slot] = eb + eb1;
    this.loaded[slot] = 1;
    return na < nb ? na : nb;
  }

  /**
   * As {@link load}, with the measurement window moved by the whole pixels (ox, oy) (discrete window
   * offset); measurement pixels outside the image count as missing. @returns the number of pixels
   * finite in both windows.
   */
  loadOffset(slot: 0 | 1, A: Float32Array, B: Float32Array, width: number, height: number, x0: number, y0: number, ox: number, oy: number): number {
    const n = this.n;
    const z = this.z[slot];
    let sa = 0;
    let sb = 0;
    let na = 0;
    let nb = 0;
    let both = 0;
    for (let r = 0; r < n; r++) {
      const yb = y0 + oy + r;
      const inY = yb >= 0 && yb < height;
      for (let c = 0; c < n; c++) {
        const a = A[x0 + c + (y0 + r) * width]!;
        const xb = x0 + ox + c;
        const b = inY && xb >= 0 && xb < width ? B[xb + yb * width]! : NaN;
        if (a === a) (sa += a), na++;
        if (b === b) (sb += b), nb++;
        if (a === a && b === b) both++;
      }
    }
    const ma = na > 0 ? sa / na : 0;
    const mb = nb > 0 ? sb / nb : 0;
    let ea = 0;
    let eb = 0;
    let j = 0;
    for (let r = 0; r < n; r++) {
      const yb = y0 + oy + r;
      const inY = yb >= 0 && yb < height;
      for (let c = 0; c < n; c++, j += 2) {
        const a = A[x0 + c + (y0 + r) * width]!;
        const xb = x0 + ox + c;
        const b = inY && xb >= 0 && xb < width ? B[xb + yb * width]! : NaN;
        const va = a === a ? a - ma : 0;
        const vb = b === b ? b - mb : 0;
        z[j] = va;
        z[j + 1] = vb;
        ea += va * va;
        eb += vb * vb;
      }
    }
    this.energyA[slot] = ea;
    this.energyB[slot] = eb;
    this.loaded[slot] = 1;
    return both;
  }

  /** Mark a slot empty (odd number of windows). */
  clear(slot: 0 | 1): void {
    this.z[slot].fill(0);
    this.energyA[slot] = 0;
    this.energyB[slot] = 0;
    this.loaded[slot] = 0;
  }

  /**
   * Correlate the loaded slots and write the results of slot s to index `out0` (slot 0) and `out1`
   * (slot 1, ignored when −1) of the outputs. A window with zero energy gives NaN.
   */
  run(out: CorrelationOutputs, out0: number, out1: number): void {
    this.correlatePlanes(out1 >= 0);
    const n = this.n;
    analysePeak(this.w, 0, n, this.energyA[0]! * this.energyB[0]!, out, out0);
    if (out1 >= 0) analysePeak(this.w, 1, n, this.energyA[1]! * this.energyB[1]!, out, out1);
  }

  private correlatePlanes(two: boolean): void {
    const n = this.n;
    const z0 = this.z[0];
    const z1 = this.z[1];
    const w = this.w;
    // spectra in the transposed layout of Fft2d (row = kx): the partner −k of an index is found the
    // same way in either layout
    this.fft.forward(z0);
    if (two) this.fft.forward(z1);
    else z1.fill(0);
    const scale = 1 / (n * n); // the inverse transform is not normalised
    const mask = n - 1;
    for (let ky = 0; ky < n; ky++) {
      const nky = (n - ky) & mask;
      for (let kx = 0; kx < n; kx++) {
        const i = 2 * (kx + ky * n);
        const m = 2 * (((n - kx) & mask) + nky * n);
        let pr = z0[i]!;
        let pi = z0[i + 1]!;
        let qr = z0[m]!;
        let qi = z0[m + 1]!;
        const c1r = 0.5 * (pr * qi + pi * qr);
        const c1i = 0.25 * (qr * qr + qi * qi - pr * pr - pi * pi);
        pr = z1[i]!;
        pi = z1[i + 1]!;
        qr = z1[m]!;
        qi = z1[m + 1]!;
        const c2r = 0.5 * (pr * qi + pi * qr);
        const c2i = 0.25 * (qr * qr + qi * qi - pr * pr - pi * pi);
        w[i] = scale * (c1r - c2i);
        w[i + 1] = scale * (c1i + c2r);
      }
    }
    this.fft.inverse(w);
  }
}

/**
 * Find the primary peak of a circular correlation plane stored interleaved (`plane[2·i + o]`, lag 0
 * at index 0), refine it with {@link gaussianPeak3} along x and y, and find the secondary peak: the
 * highest local maximum (≥ its 8 neighbours) outside the primary's 3×3 neighbourhood.
 */
export function analysePeak(plane: Float64Array, o: number, n: number, energy: number, out: CorrelationOutputs, idx: number): void {
  if (!(energy > 0)) {
    out.dx[idx] = out.dy[idx] = out.correlation[idx] = out.peakRatio[idx] = NaN;
    return;
  }
  const nn = n * n;
  let best = -Infinity;
  let bi = 0;
  for (let i = 0; i < nn; i++) {
    const v = plane[2 * i + o]!;
    if (v > best) (best = v), (bi = i);
  }
  const mask = n - 1;
  const px = bi & mask;
  const py = (bi - px) / n;
  const xm = (px - 1) & mask;
  const xp = (px + 1) & mask;
  const ym = (py - 1) & mask;
  const yp = (py + 1) & mask;
  const half = n >> 1;
  const ux = px >= half ? px - n : px;
  const uy = py >= half ? py - n : py;
  // undo the loss-of-pairs weighting (1 − |u|/n) of a correlation of windows of equal size before the
  // fit (Raffel et al., Particle Image Velocimetry, 3rd ed. 2018, §5.4; Westerweel 1997, Meas. Sci.
  // Technol. 8:1379): otherwise the sub-pixel estimate is biased toward zero by about u/n · s²
  const gx = (u: number): number => 1 / (1 - Math.abs(u) / n);
  const sx = gaussianPeak3(plane[2 * (xm + py * n) + o]! * gx(ux - 1), best * gx(ux), plane[2 * (xp + py * n) + o]! * gx(ux + 1));
  const sy = gaussianPeak3(plane[2 * (px + ym * n) + o]! * gx(uy - 1), best * gx(uy), plane[2 * (px + yp * n) + o]! * gx(uy + 1));
  out.dx[idx] = ux + sx;
  out.dy[idx] = uy + sy;
  out.correlation[idx] = best / Math.sqrt(energy);
  // secondary peak
  let second = -Infinity;
  for (let y = 0; y < n; y++) {
    const ddy = (y - py) & mask;
    const nearY = ddy <= 1 || ddy === mask;
    const yu = ((y - 1) & mask) * n;
    const yc = y * n;
    const yd = ((y + 1) & mask) * n;
    for (let x = 0; x < n; x++) {
      const v = plane[2 * (x + yc) + o]!;
      if (v <= second) continue;
      if (nearY) {
        const ddx = (x - px) & mask;
        if (ddx <= 1 || ddx === mask) continue;
      }
      const xl = (x - 1) & mask;
      const xr = (x + 1) & mask;
      if (
        v >= plane[2 * (xl + yc) + o]! &&
        v >= plane[2 * (xr + yc) + o]! &&
        v >= plane[2 * (xl + yu) + o]! &&
        v >= plane[2 * (x + yu) + o]! &&
        v >= plane[2 * (xr + yu) + o]! &&
        v >= plane[2 * (xl + yd) + o]! &&
        v >= plane[2 * (x + yd) + o]! &&
        v >= plane[2 * (xr + yd) + o]!
      )
        second = v;
    }
  }
  // a non-positive primary peak is no match at all: ratio 1 (ambiguous), never the cap
  const ratio = !(best > 0) ? 1 : second > 0 ? best / second : PEAK_RATIO_CAP;
  out.peakRatio[idx] = ratio > PEAK_RATIO_CAP ? PEAK_RATIO_CAP : ratio;
}
