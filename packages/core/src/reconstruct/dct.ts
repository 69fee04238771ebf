/**
 * DCT-II and its inverse (DCT-III) of any length through one complex FFT of the same length
 * (Makhoul, J. (1980). A fast cosine transform in one and two dimensions. IEEE Trans. Acoust.,
 * Speech, Signal Process. 28(1):27–34). Private helper of the DCT Poisson solver.
 *
 * Forward: X[k] = Σ_n x[n] cos(πk(2n+1)/(2N)).
 * Inverse: x[n] = (1/N)·(X[0] + 2 Σ_{k≥1} X[k] cos(πk(2n+1)/(2N))).
 */
import { complexFftPlan, type ComplexFftPlan } from './complexFft.js';

export interface DctPlan {
  readonly size: number;
  /** DCT-II of x (length N, strided: x[offset + n·stride]) in place. */
  forward(x: Float64Array, offset: number, stride: number): void;
  /** Inverse (scaled DCT-III) in place. */
  inverse(x: Float64Array, offset: number, stride: number): void;
}

export function dctPlan(n: number): DctPlan {
  const fft: ComplexFftPlan = complexFftPlan(n);
  const v = new Float64Array(2 * n);
  const V = new Float64Array(2 * n);
  const cs = new Float64Array(n);
  const sn = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    cs[k] = Math.cos((Math.PI * k) / (2 * n));
    sn[k] = Math.sin((Math.PI * k) / (2 * n));
  }
  const half = Math.ceil(n / 2);
  return {
    size: n,
    forward(x, off, st) {
      for (let i = 0; i < half; i++) {
        v[2 * i] = x[off + 2 * i * st]!;
        v[2 * i + 1] = 0;
      }
      for (let i = 0; 2 * i + 1 < n; i++) {
        v[2 * (n - 1 - i)] = x[off + (2 * i + 1) * st]!;
        v[2 * (n - 1 - i) + 1] = 0;
      }
      fft.forward(v, V);
      // X[k] = Re(e^{−iπk/2N} V[k])
      for (let k = 0; k < n; k++) x[off + k * st] = V[2 * k]! * cs[k]! + V[2 * k + 1]! * sn[k]!;
    },
    inverse(x, off, st) {
      // V[k] = e^{iπk/2N}(X[k] − i X[N−k]) / N, X[N] = 0; v = inverse FFT(V) (real)
      for (let k = 0; k < n; k++) {
        const a = x[off + k * st]!;
        const b = k === 0 ? 0 : -x[off + (n - k) * st]!;
        // (a + ib)(c + is)
        const re = a * cs[k]! - b * sn[k]!;
        const im = a * sn[k]! + b * cs[k]!;
        // inverse FFT via forward FFT of the conjugate
        v[2 * k] = re;
        v[2 * k + 1] = -im;
      }
      fft.forward(v, V);
      // v_n = conj(FFT(conj(V)))/N; the real part suffices
      for (let i = 0; i < half; i++) x[off + 2 * i * st] = V[2 * i]! / n;
      for (let i = 0; 2 * i + 1 < n; i++) x[off + (2 * i + 1) * st] = V[2 * (n - 1 - i)]! / n;
    },
  };
}
