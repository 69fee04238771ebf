/**
 * Global shift between two images: FFT cross-correlation of a central crop (side a power of two,
 * ≤ 512 px), zero-mean, normalised by the crop energies, with a three-point Gaussian sub-pixel peak
 * fit in each axis (Willert & Gharib 1991, Exp. Fluids 10:181). Returns measured minus reference,
 * +x right, +y down, px. The crop sees the flow too, so a strong disturbance biases the result; a
 * flow-free region gives the camera motion alone.
 */
import type { Field } from '../util/field.js';
import { createFft2 } from './fft2.js';

/** Result of {@link globalShift}. */
export interface GlobalShift {
  readonly dxPx: number;
  readonly dyPx: number;
  /** Normalised correlation at the peak (−1…1). */
  readonly peak: number;
  /** Crop side used, px. */
  readonly cropPx: number;
}

export function globalShift(ref: Field, meas: Field, maxCrop = 512): GlobalShift {
  let n = 8;
  while (n * 2 <= Math.min(ref.width, ref.height, maxCrop)) n *= 2;
  const x0 = Math.floor((ref.width - n) / 2);
  const y0 = Math.floor((ref.height - n) / 2);
  const fft = createFft2(n);
  const a = new Float64Array(2 * n * n);
  const b = new Float64Array(2 * n * n);
  const load = (f: Field, out: Float64Array): number => {
    let s = 0;
    for (let y = 0; y < n; y++) for (let x = 0; x < n; x++) s += f.data[x0 + x + (y0 + y) * f.width]!;
    const m = s / (n * n);
    let e = 0;
    for (let y = 0; y < n; y++) for (let x = 0; x < n; x++) {
      const v = f.data[x0 + x + (y0 + y) * f.width]! - m;
      out[2 * (x + n * y)] = Number.isFinite(v) ? v : 0;
      e += Number.isFinite(v) ? v * v : 0;
    }
    return e;
  };
  const ea = load(ref, a);
  const eb = load(meas, b);
  fft.run(a, false);
  fft.run(b, false);
  // conj(A)·B → peak at the displacement of meas relative to ref
  for (let k = 0; k < n * n; k++) {
    const ar = a[2 * k]!, ai = a[2 * k + 1]!, br = b[2 * k]!, bi = b[2 * k + 1]!;
    a[2 * k] = ar * br + ai * bi;
    a[2 * k + 1] = ar * bi - ai * br;
  }
  fft.run(a, true);
  const norm = Math.sqrt(ea * eb) || 1;
  let best = -Infinity;
  let bx = 0;
  let by = 0;
  for (let y = 0; y < n; y++) for (let x = 0; x < n; x++) {
    const v = a[2 * (x + n * y)]!;
    if (v > best) {
      best = v;
      bx = x;
      by = y;
    }
  }
  const at = (x: number, y: number): number => a[2 * (((x + n) % n) + n * ((y + n) % n))]!;
  const gauss = (m: number, c: number, p: number): number => {
    if (!(m > 0 && c > 0 && p > 0)) return 0;
    const lm = Math.log(m), lc = Math.log(c), lp = Math.log(p);
    const den = 2 * (lm - 2 * lc + lp);
    return den < 0 ? (lm - lp) / den : 0;
  };
  const sx = gauss(at(bx - 1, by), best, at(bx + 1, by));
  const sy = gauss(at(bx, by - 1), best, at(bx, by + 1));
  const wrap = (v: number): number => (v > n / 2 ? v - n : v);
  return { dxPx: wrap(bx) + sx, dyPx: wrap(by) + sy, peak: best / norm, cropPx: n };
}
