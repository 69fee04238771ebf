import { describe, expect, it } from 'vitest';
import { discBlur } from '../../packages/core/src/plan/discBlur.js';

describe('discBlur(field, diameterPx) — uniform disc average', () => {
  it('keeps constants everywhere and linear ramps away from the border (disc is symmetric)', () => {
    const W = 60, H = 40;
    const data = new Float32Array(W * H);
    for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) data[x + y * W] = 2 * x - 3 * y + 5;
    const b = discBlur({ width: W, height: H, data }, 9);
    for (let y = 6; y < H - 6; y++) for (let x = 6; x < W - 6; x++) expect(Math.abs(b.data[x + y * W]! - data[x + y * W]!)).toBeLessThan(1e-3);
    const c = discBlur({ width: W, height: H, data: new Float32Array(W * H).fill(3) }, 9);
    for (const v of c.data) expect(Math.abs(v - 3)).toBeLessThan(1e-4);
  });
  it('a point spreads over a disc of area π·D²/4 (D = 11 px → 95.0 px²), total preserved', () => {
    const W = 41;
    const data = new Float32Array(W * W);
    data[20 + 20 * W] = 1;
    const b = discBlur({ width: W, height: W, data }, 11);
    let sum = 0, peak = 0;
    for (const v of b.data) { sum += v; peak = Math.max(peak, v); }
    expect(Math.abs(sum - 1)).toBeLessThan(1e-4);
    // uniform disc: value 1/area inside → area = 1/peak
    expect(Math.abs(1 / peak - (Math.PI * 121) / 4) / ((Math.PI * 121) / 4)).toBeLessThan(0.02);
  });
});
