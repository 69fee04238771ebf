/**
 * Complex FFT of any length: fft.js for powers of two, Bluestein's chirp-z algorithm otherwise
 * (Bluestein, L. (1970). A linear filtering approach to the computation of discrete Fourier
 * transform. IEEE Trans. Audio Electroacoust. 18(4):451–455). Private helper of the DCT solver.
 */
import FFT from 'fft.js';

/** A reusable plan: forward transform X[k] = Σ x[n] e^{−2πi kn/N}, interleaved re/im Float64Arrays. */
export interface ComplexFftPlan {
  readonly size: number;
  /** Forward transform of `input` (interleaved, length 2N) into `output` (length 2N). */
  forward(input: Float64Array, output: Float64Array): void;
}

function isPow2(n: number): boolean {
  return n > 0 && (n & (n - 1)) === 0;
}

export function complexFftPlan(n: number): ComplexFftPlan {
  if (n === 1) return { size: 1, forward: (i, o) => { o[0] = i[0]!; o[1] = i[1]!; } };
  if (isPow2(n)) {
    const f = new FFT(n);
    return { size: n, forward: (i, o) => f.transform(o as unknown as number[], i as unknown as number[]) };
  }
  let m = 1;
  while (m < 2 * n - 1) m <<= 1;
  const f = new FFT(m);
  // chirp w[k] = exp(−iπ k²/N); index k² mod 2N avoids precision loss for large k
  const w = new Float64Array(2 * n);
  for (let k = 0; k < n; k++) {
    const a = (Math.PI * ((k * k) % (2 * n))) / n;
    w[2 * k] = Math.cos(a);
    w[2 * k + 1] = -Math.sin(a);
  }
  // B = FFT of conj(w) arranged circularly
  const b = new Float64Array(2 * m);
  for (let k = 0; k < n; k++) {
    b[2 * k] = w[2 * k]!;
    b[2 * k + 1] = -w[2 * k + 1]!;
    if (k > 0) {
      b[2 * (m - k)] = w[2 * k]!;
      b[2 * (m - k) + 1] = -w[2 * k + 1]!;
    }
  }
  const bf = new Float64Array(2 * m);
  f.transform(bf as unknown as number[], b as unknown as number[]);
  const a = new Float64Array(2 * m);
  const af = new Float64Array(2 * m);
  return {
    size: n,
    forward(input, output) {
      a.fill(0);
      for (let k = 0; k < n; k++) {
        const xr = input[2 * k]!, xi = input[2 * k + 1]!, wr = w[2 * k]!, wi = w[2 * k + 1]!;
        a[2 * k] = xr * wr - xi * wi;
        a[2 * k + 1] = xr * wi + xi * wr;
      }
      f.transform(af as unknown as number[], a as unknown as number[]);
      for (let k = 0; k < m; k++) {
        const ar = af[2 * k]!, ai = af[2 * k + 1]!, br = bf[2 * k]!, bi = bf[2 * k + 1]!;
        af[2 * k] = ar * br - ai * bi;
        af[2 * k + 1] = ar * bi + ai * br;
      }
      f.inverseTransform(a as unknown as number[], af as unknown as number[]);
      for (let k = 0; k < n; k++) {
        const cr = a[2 * k]!, ci = a[2 * k + 1]!, wr = w[2 * k]!, wi = w[2 * k + 1]!;
        output[2 * k] = cr * wr - ci * wi;
        output[2 * k + 1] = cr * wi + ci * wr;
      }
    },
  };
}
