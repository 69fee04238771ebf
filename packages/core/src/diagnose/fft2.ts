/**
 * In-place 2-D complex FFT (row–column, fft.js radix-4 kernels) on interleaved re/im Float64Arrays of
 * size n×n (n a power of two). Private helper of the diagnose stage.
 */
import FFT from 'fft.js';

/** A reusable n×n transform. */
export interface Fft2 {
  readonly n: number;
  /** Forward (sign −1) or inverse (unnormalised… fft.js normalises the inverse by 1/n per axis) transform. */
  run(data: Float64Array, inverse: boolean): void;
}

export function createFft2(n: number): Fft2 {
  const f = new FFT(n);
  const a = new Float64Array(2 * n);
  const b = new Float64Array(2 * n);
  const run = (d: Float64Array, inverse: boolean): void => {
    for (let y = 0; y < n; y++) {
      a.set(d.subarray(2 * n * y, 2 * n * (y + 1)));
      if (inverse) f.inverseTransform(b, a);
      else f.transform(b, a);
      d.set(b, 2 * n * y);
    }
    for (let x = 0; x < n; x++) {
      for (let y = 0; y < n; y++) {
        a[2 * y] = d[2 * (x + n * y)]!;
        a[2 * y + 1] = d[2 * (x + n * y) + 1]!;
      }
      if (inverse) f.inverseTransform(b, a);
      else f.transform(b, a);
      for (let y = 0; y < n; y++) {
        d[2 * (x + n * y)] = b[2 * y]!;
        d[2 * (x + n * y) + 1] = b[2 * y + 1]!;
      }
    }
  };
  return { n, run };
}
