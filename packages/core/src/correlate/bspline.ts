/**
 * Cubic B-spline image interpolation: prefilter (direct B-spline transform) and sampling.
 *
 * The prefilter turns pixel values s(k) into coefficients c(k) such that the cubic B-spline
 * Σ c(k)·β³(x − k) passes through every pixel value; it is the recursive filter with pole
 * z = √3 − 2 and gain 6, run causally then anti-causally along x, then along y, with mirror
 * (whole-sample symmetric) boundaries. Sampling uses the 4×4 coefficients around the point.
 *
 * References: M. Unser, A. Aldroubi & M. Eden, "B-spline signal processing: Part II — efficient design
 * and applications", IEEE Trans. Signal Processing 41(2):834–848 (1993); M. Unser, "Splines: a perfect
 * fit for signal and image processing", IEEE Signal Processing Magazine 16(6):22–38 (1999).
 */
const Z = Math.sqrt(3) - 2;
const GAIN = 6; // (1 − z)(1 − 1/z)
const TOL_TERMS = Math.ceil(Math.log(1e-9) / Math.log(Math.abs(Z))); // ≈ 16

/** A growable scratch line of the prefilter (each engine workspace owns one; used within one call). */
export class LineScratch {
  private buf = new Float64Array(0);
  /** At least `n` values (contents undefined). */
  get(n: number): Float64Array {
    if (this.buf.length < n) this.buf = new Float64Array(n);
    return this.buf;
  }
}

/** Scratch of callers that pass none (used synchronously, never across an await). */
const DEFAULT_SCRATCH = new LineScratch();

/** 1-D in-place prefilter of `c[0..n)` (Float64), mirror boundaries. */
function prefilterLine(c: Float64Array, n: number): void {
  if (n === 1) return;
  for (let k = 0; k < n; k++) c[k]! *= GAIN;
  // causal initial value: Σ z^k c(k), truncated where z^k < 1e-9
  const kmax = Math.min(n, TOL_TERMS);
  let zk = 1;
  let sum = 0;
  for (let k = 0; k < kmax; k++) (sum += zk * c[k]!), (zk *= Z);
  c[0] = sum;
  for (let k = 1; k < n; k++) c[k] = c[k]! + Z * c[k - 1]!;
  c[n - 1] = (Z / (Z * Z - 1)) * (c[n - 1]! + Z * c[n - 2]!);
  for (let k = n - 2; k >= 0; k--) c[k] = Z * (c[k + 1]! - c[k]!);
}

/** Prefilter rows y0..y1−1 of `src` along x into `dst` (both width × height). */
export function prefilterRows(src: Float32Array, dst: Float32Array, width: number, y0: number, y1: number, scratch: LineScratch = DEFAULT_SCRATCH): void {
  const c = scratch.get(width);
  for (let y = y0; y < y1; y++) {
    const o = y * width;
    for (let x = 0; x < width; x++) c[x] = src[o + x]!;
    prefilterLine(c, width);
    for (let x = 0; x < width; x++) dst[o + x] = c[x]!;
  }
}

/**
 * Prefilter columns x0..x1−1 of `buf` along y, in place. Columns are processed in blocks of 16 to keep
 * the memory access row-wise.
 */
export function prefilterCols(buf: Float32Array, width: number, height: number, x0: number, x1: number, scratch: LineScratch = DEFAULT_SCRATCH): void {
  const B = 16;
  const c = scratch.get(B * height);
  for (let xb = x0; xb < x1; xb += B) {
    const nb = Math.min(B, x1 - xb);
    for (let y = 0; y < height; y++) {
      const o = y * width + xb;
      for (let j = 0; j < nb; j++) c[j * height + y] = buf[o + j]!;
    }
    for (let j = 0; j < nb; j++) prefilterLine(c.subarray(j * height, (j + 1) * height), height);
    for (let y = 0; y < height; y++) {
      const o = y * width + xb;
      for (let j = 0; j < nb; j++) buf[o + j] = c[j * height + y]!;
    }
  }
}

function mirror(i: number, n: number): number {
  if (n === 1) return 0;
  const p = 2 * (n - 1);
  i = ((i % p) + p) % p;
  return i < n ? i : p - i;
}

/**
 * Value of the cubic B-spline with coefficients `c` (width × height) at (x, y); NaN outside the image
 * area [−½, width − ½] × [−½, height − ½].
 */
export function sampleBspline(c: Float32Array, width: number, height: number, x: number, y: number): number {
  if (!(x >= -0.5 && x <= width - 0.5 && y >= -0.5 && y <= height - 0.5)) return NaN;
  const ix = Math.floor(x);
  const iy = Math.floor(y);
  const tx = x - ix;
  const ty = y - iy;
  const ux = 1 - tx;
  const uy = 1 - ty;
  const tx2 = tx * tx;
  const ty2 = ty * ty;
  const wx0 = (ux * ux * ux) / 6;
  const wx3 = (tx2 * tx) / 6;
  const wx1 = 2 / 3 - tx2 + 0.5 * tx2 * tx;
  const wx2 = 1 - wx0 - wx1 - wx3;
  const wy0 = (uy * uy * uy) / 6;
  const wy3 = (ty2 * ty) / 6;
  const wy1 = 2 / 3 - ty2 + 0.5 * ty2 * ty;
  const wy2 = 1 - wy0 - wy1 - wy3;
  if (ix >= 1 && ix + 2 < width && iy >= 1 && iy + 2 < height) {
    let k = ix - 1 + (iy - 1) * width;
    let s = wy0 * (wx0 * c[k]! + wx1 * c[k + 1]! + wx2 * c[k + 2]! + wx3 * c[k + 3]!);
    k += width;
    s += wy1 * (wx0 * c[k]! + wx1 * c[k + 1]! + wx2 * c[k + 2]! + wx3 * c[k + 3]!);
    k += width;
    s += wy2 * (wx0 * c[k]! + wx1 * c[k + 1]! + wx2 * c[k + 2]! + wx3 * c[k + 3]!);
    k += width;
    s += wy3 * (wx0 * c[k]! + wx1 * c[k + 1]! + wx2 * c[k + 2]! + wx3 * c[k + 3]!);
    return s;
  }
  const x0 = mirror(ix - 1, width);
  const x1 = mirror(ix, width);
  const x2 = mirror(ix + 1, width);
  const x3 = mirror(ix + 2, width);
  let s = 0;
  for (let j = 0; j < 4; j++) {
    const row = mirror(iy - 1 + j, height) * width;
    const wy = j === 0 ? wy0 : j === 1 ? wy1 : j === 2 ? wy2 : wy3;
    s += wy * (wx0 * c[row + x0]! + wx1 * c[row + x1]! + wx2 * c[row + x2]! + wx3 * c[row + x3]!);
  }
  return s;
}
