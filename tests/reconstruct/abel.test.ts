import { describe, expect, it } from 'vitest';
import { abelDeflectionOperator, abelInvertDeflection } from '@rhofield/core';

// Deflection-form Abel pair (standard result, e.g. Kolhe & Agrawal 2009, Appl. Opt. 48:3894): for n − n∞ = Δn·exp(−r²/σ²),
// ε(y) = −(2√π Δn/n∞)(y/σ)·exp(−y²/σ²).
describe('abelInvertDeflection(eps, nInf, out) — Kolhe & Agrawal 2009 deflection form, two-point', () => {
  for (const sigma of [4, 8, 16]) {
    it(`recovers the Gaussian with σ = ${sigma} steps within 1 % of the peak for r ≥ 2 steps`, () => {
      const N = 5 * sigma;
      const dn = -4e-5, nInf = 1.000268;
      const eps = Float64Array.from({ length: N }, (_, j) => -(2 * Math.sqrt(Math.PI) * dn / nInf) * (j / sigma) * Math.exp(-(j * j) / sigma ** 2));
      const out = new Float64Array(N);
      abelInvertDeflection(eps, nInf, out);
      for (let i = 2; i < N; i++) {
        const exact = dn * Math.exp(-(i * i) / sigma ** 2);
        expect(Math.abs(out[i]! - exact), `r = ${i}`).toBeLessThanOrEqual(0.01 * Math.abs(dn));
      }
    });
  }
  it('stops at a gap: NaN at and inside the last missing sample, values outside unchanged', () => {
    const N = 40, s = 8;
    const eps = Float64Array.from({ length: N }, (_, j) => (j / s) * Math.exp(-(j * j) / s ** 2) * 1e-4);
    const full = new Float64Array(N);
    abelInvertDeflection(eps, 1, full);
    eps[6] = NaN;
    const out = new Float64Array(N);
    abelInvertDeflection(eps, 1, out);
    for (let i = 0; i <= 6; i++) expect(Number.isNaN(out[i]!)).toBe(true);
    for (let i = 7; i < N; i++) expect(out[i]).toBe(full[i]);
  });
  it('operator is upper triangular and cached per size', () => {
    const m = abelDeflectionOperator(12);
    expect(abelDeflectionOperator(12)).toBe(m);
    for (let i = 0; i < 12; i++) for (let j = 0; j < i; j++) expect(m.get(i, j)).toBe(0);
  });
});
