import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { windowGrid } from '@rhofield/core';

describe('windowGrid(width, height, windowPx, stepPx)', () => {
  it('windows lie inside the image, count = floor((N − W)/s) + 1, spacing = step, centre = x0 + (W − 1)/2', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 4, max: 7 }).map((e) => 2 ** e),
        fc.integer({ min: 1, max: 80 }),
        fc.integer({ min: 0, max: 600 }),
        fc.integer({ min: 0, max: 600 }),
        (W, step, ex, ey) => {
          const width = W + ex;
          const height = W + ey;
          const g = windowGrid(width, height, W, step);
          expect(g.cols).toBe(Math.floor((width - W) / step) + 1);
          expect(g.rows).toBe(Math.floor((height - W) / step) + 1);
          for (let c = 0; c < g.cols; c++) {
            const x0 = g.xPx[c]! - (W - 1) / 2;
            expect(Number.isInteger(x0)).toBe(true);
            expect(x0).toBeGreaterThanOrEqual(0);
            expect(x0 + W - 1).toBeLessThanOrEqual(width - 1);
            if (c > 0) expect(g.xPx[c]! - g.xPx[c - 1]!).toBe(step);
          }
          for (let r = 0; r < g.rows; r++) {
            const y0 = g.yPx[r]! - (W - 1) / 2;
            expect(y0).toBeGreaterThanOrEqual(0);
            expect(y0 + W - 1).toBeLessThanOrEqual(height - 1);
            if (r > 0) expect(g.yPx[r]! - g.yPx[r - 1]!).toBe(step);
          }
        },
      ),
    );
  });
  it('a 32 px window every 16 px on 64×48 has centres x 15.5, 31.5, 47.5 and y 15.5, 31.5 (worked by hand)', () => {
    const g = windowGrid(64, 48, 32, 16);
    expect(Array.from(g.xPx)).toEqual([15.5, 31.5, 47.5]);
    expect(Array.from(g.yPx)).toEqual([15.5, 31.5]);
  });
});
