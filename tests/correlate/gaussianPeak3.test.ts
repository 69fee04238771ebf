import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { gaussianPeak3 } from '@rhofield/core';

describe('gaussianPeak3(c₋, c₀, c₊)', () => {
  // Willert & Gharib 1991 (Exp Fluids 10:181), three-point Gaussian fit: exact for samples of
  // exp(−(x − x0)²/2s²), because ln of the samples is a parabola in x.
  it('recovers x0 exactly from samples of a Gaussian', () => {
    fc.assert(
      fc.property(fc.double({ min: -0.5, max: 0.5, noNaN: true }), fc.double({ min: 0.4, max: 3, noNaN: true }), fc.double({ min: 0.1, max: 1e3, noNaN: true }), (x0, s, a) => {
        const g = (x: number): number => a * Math.exp(-((x - x0) ** 2) / (2 * s * s));
        expect(Math.abs(gaussianPeak3(g(-1), g(0), g(1)) - x0)).toBeLessThan(1e-9);
      }),
    );
  });
  it('falls back to the parabola when a neighbour is ≤ 0 (vertex of the parabola through 3 points)', () => {
    // parabola y = 1 − (x − 0.2)²: samples at −1, 0, 1 are −0.44, 0.96, 0.36 → vertex 0.2
    expect(gaussianPeak3(-0.44, 0.96, 0.36)).toBeCloseTo(0.2, 12);
  });
  it('a flat triple gives 0 and results stay within ±0.5', () => {
    expect(gaussianPeak3(1, 1, 1)).toBe(0);
    expect(Math.abs(gaussianPeak3(0.999, 1, 0.0001))).toBeLessThanOrEqual(0.5);
  });
});
