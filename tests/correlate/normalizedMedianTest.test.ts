import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { normalizedMedianTest, replaceByNeighbourMedian, type Field } from '@rhofield/core';

const field = (w: number, h: number, f: (c: number, r: number) => number): Field => {
  const data = new Float32Array(w * h);
  for (let r = 0; r < h; r++) for (let c = 0; c < w; c++) data[c + r * w] = f(c, r);
  return { width: w, height: h, data };
};

// Westerweel & Scarano 2005 (Exp Fluids 39:1096): 8 neighbours, threshold 2, ε = 0.1 px.
describe('normalizedMedianTest(dx, dy, 2, 0.1)', () => {
  it('never flags a linear field', () => {
    fc.assert(
      fc.property(fc.double({ min: -2, max: 2, noNaN: true }), fc.double({ min: -2, max: 2, noNaN: true }), fc.double({ min: -5, max: 5, noNaN: true }), (a, b, c0) => {
        const dx = field(9, 7, (c, r) => c0 + a * c + b * r);
        const dy = field(9, 7, (c, r) => b * c - a * r);
        const out = new Uint8Array(63);
        expect(normalizedMedianTest(dx, dy, 2, 0.1, out)).toBe(0);
      }),
    );
  });
  it('flags a single spike in a smooth field and replaces it by the neighbour median', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 8 }), fc.integer({ min: 0, max: 6 }), fc.double({ min: 1, max: 20, noNaN: true }), fc.boolean(), (sc, sr, spike, sign) => {
        const smooth = (c: number, r: number): number => 1 + 0.3 * Math.sin(c / 3) + 0.2 * Math.cos(r / 4);
        const dx = field(9, 7, smooth);
        const dy = field(9, 7, (c, r) => -smooth(r, c));
        const k = sc + sr * 9;
        dx.data[k] = dx.data[k]! + (sign ? spike : -spike);
        const out = new Uint8Array(63);
        const n = normalizedMedianTest(dx, dy, 2, 0.1, out);
        expect(out[k]).toBe(1);
        expect(n).toBe(1);
        replaceByNeighbourMedian(dx, dy, out);
        expect(Math.abs(dx.data[k]! - smooth(sc, sr))).toBeLessThan(0.35);
      }),
    );
  });
});
