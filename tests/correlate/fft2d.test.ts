/**
 * The engine's own 2-D FFT (packages/core/src/correlate/fft2d.ts) against the definition of the
 * discrete Fourier transform, X(kx, ky) = Σ x(px, py)·e^{−2πi(kx·px + ky·py)/n}, evaluated directly
 * (O(n⁴), independent of any FFT code), and the round trip inverse(forward(x)) = n²·x.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { Fft2d } from '../../packages/core/src/correlate/fft2d.js';

function dft2(re: Float64Array, im: Float64Array, n: number): { re: Float64Array; im: Float64Array } {
  const oRe = new Float64Array(n * n);
  const oIm = new Float64Array(n * n);
  for (let ky = 0; ky < n; ky++)
    for (let kx = 0; kx < n; kx++) {
      let sr = 0;
      let si = 0;
      for (let py = 0; py < n; py++)
        for (let px = 0; px < n; px++) {
          const a = (-2 * Math.PI * (((kx * px + ky * py) % n) + 0)) / n;
          const c = Math.cos(a);
          const s = Math.sin(a);
          const xr = re[px + py * n]!;
          const xi = im[px + py * n]!;
          sr += xr * c - xi * s;
          si += xr * s + xi * c;
        }
      oRe[kx + ky * n] = sr;
      oIm[kx + ky * n] = si;
    }
  return { re: oRe, im: oIm };
}

describe('Fft2d', () => {
  it('forward matches the direct DFT (output transposed: storage row = kx) for n = 2 … 32, random complex input', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 5 }), fc.integer({ min: 1, max: 1_000_000 }), (log2n, seed) => {
        const n = 1 << log2n;
        let s = seed;
        const rnd = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648) * 2 - 1;
        const re = Float64Array.from({ length: n * n }, rnd);
        const im = Float64Array.from({ length: n * n }, rnd);
        const buf = new Float64Array(2 * n * n);
        for (let i = 0; i < n * n; i++) {
          buf[2 * i] = re[i]!;
          buf[2 * i + 1] = im[i]!;
        }
        new Fft2d(n).forward(buf);
        const ref = dft2(re, im, n);
        let err = 0;
        for (let ky = 0; ky < n; ky++)
          for (let kx = 0; kx < n; kx++) {
            const j = ky + kx * n; // transposed storage
            err = Math.max(err, Math.abs(buf[2 * j]! - ref.re[kx + ky * n]!), Math.abs(buf[2 * j + 1]! - ref.im[kx + ky * n]!));
          }
        expect(err).toBeLessThan(1e-9 * n * n);
      }),
      { numRuns: 24 },
    );
  });

  it('inverse(forward(x)) = n²·x for n = 32, 64 and 128 (unnormalised pair, original orientation)', () => {
    for (const n of [32, 64, 128]) {
      const x = Float64Array.from({ length: 2 * n * n }, (_, i) => Math.sin(i * 0.37) + (i % 7) * 0.1);
      const buf = x.slice();
      const f = new Fft2d(n);
      f.forward(buf);
      f.inverse(buf);
      let err = 0;
      for (let i = 0; i < x.length; i++) err = Math.max(err, Math.abs(buf[i]! / (n * n) - x[i]!));
      expect(err).toBeLessThan(1e-12);
    }
  });

  it('refuses sizes that are not powers of two', () => {
    expect(() => new Fft2d(24)).toThrow(/power of two/);
  });
});
