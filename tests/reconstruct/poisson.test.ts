import { describe, expect, it } from 'vitest';
import { poissonCg, poissonDct } from '@rhofield/core';

// Analytic potential on [0,1]²: φ = e^x sin(2y) + x y² (not Neumann-compatible on purpose: least
// squares has natural boundaries). Exact gradient sampled at the nodes; errors after removing the
// free constant (mean difference). Second order: RMS error ratio ≈ 4 per halving of h.
const phi = (x: number, y: number) => Math.exp(x) * Math.sin(2 * y) + x * y * y;
const gxf = (x: number, y: number) => Math.exp(x) * Math.sin(2 * y) + y * y;
const gyf = (x: number, y: number) => 2 * Math.exp(x) * Math.cos(2 * y) + 2 * x * y;

function problem(n: number, hole: boolean) {
  const h = 1 / (n - 1);
  const gx = new Float64Array(n * n), gy = new Float64Array(n * n), ex = new Float64Array(n * n);
  for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) {
    const x = i * h, y = j * h, p = i + j * n;
    const out = hole && (x - 0.55) ** 2 + (y - 0.45) ** 2 < 0.2 ** 2; // disc-shaped hole
    gx[p] = out ? NaN : gxf(x, y);
    gy[p] = out ? NaN : gyf(x, y);
    ex[p] = out ? NaN : phi(x, y);
  }
  return { h, gx, gy, ex };
}
function rmsError(a: Float64Array, ex: Float64Array): number {
  let s = 0, c = 0;
  for (let i = 0; i < a.length; i++) if (Number.isFinite(ex[i]!)) (s += a[i]! - ex[i]!), c++;
  const off = s / c;
  let e = 0;
  for (let i = 0; i < a.length; i++) if (Number.isFinite(ex[i]!)) e += (a[i]! - ex[i]! - off) ** 2;
  return Math.sqrt(e / c);
}

describe('poissonDct(gx, gy, w, h, hx, hy) — full rectangle', () => {
  it('second-order convergence on 33, 65, 129 nodes (ratio 4 ± 0.6)', () => {
    const e = [33, 65, 129].map((n) => {
      const p = problem(n, false);
      return rmsError(poissonDct(p.gx, p.gy, n, n, p.h, p.h), p.ex);
    });
    expect(e[0]!).toBeLessThan(3e-4);
    expect(e[0]! / e[1]!).toBeGreaterThan(3.4);
    expect(e[0]! / e[1]!).toBeLessThan(4.6);
    expect(e[1]! / e[2]!).toBeGreaterThan(3.4);
    expect(e[1]! / e[2]!).toBeLessThan(4.6);
  });
  it('works for non-power-of-two, non-square grids (exact for a linear field)', () => {
    const w = 37, hgt = 23, n = w * hgt;
    const gx = new Float64Array(n).fill(2), gy = new Float64Array(n).fill(-3);
    const r = poissonDct(gx, gy, w, hgt, 0.5, 0.25);
    for (let j = 0; j < hgt; j++) for (let i = 0; i < w; i++) {
      expect(r[i + j * w]! - r[0]!).toBeCloseTo(2 * 0.5 * i - 3 * 0.25 * j, 9);
    }
  });
});

describe('poissonCg(gx, gy, w, h, hx, hy) — masked grid', () => {
  it('same answer as the DCT solver on a full rectangle', () => {
    const p = problem(40, false);
    const a = poissonDct(p.gx, p.gy, 40, 40, p.h, p.h);
    const b = poissonCg(p.gx, p.gy, 40, 40, p.h, p.h, { tolerance: 1e-12 }).phi;
    expect(rmsError(b, a)).toBeLessThan(1e-9);
  });
  it('second-order convergence on a square with a disc-shaped hole (33, 65, 129 nodes), NaN in the hole', () => {
    const e = [33, 65, 129].map((n) => {
      const p = problem(n, true);
      const r = poissonCg(p.gx, p.gy, n, n, p.h, p.h, { tolerance: 1e-11 });
      expect(r.components).toBe(1);
      expect(r.relativeResidual).toBeLessThan(1e-11);
      const c = Math.round(0.55 / p.h) + Math.round(0.45 / p.h) * n;
      expect(Number.isNaN(r.phi[c]!)).toBe(true);
      return rmsError(r.phi, p.ex);
    });
    expect(e[0]! / e[1]!).toBeGreaterThan(3.4);
    expect(e[0]! / e[1]!).toBeLessThan(4.6);
    expect(e[1]! / e[2]!).toBeGreaterThan(3.4);
    expect(e[1]! / e[2]!).toBeLessThan(4.6);
  });
  it('labels separate regions and gives zero-gradient input a constant', () => {
    const w = 10, h = 5, n = w * h;
    const gx = new Float64Array(n), gy = new Float64Array(n);
    for (let j = 0; j < h; j++) gx[5 + j * w] = gy[5 + j * w] = NaN; // a wall at column 5
    const r = poissonCg(gx, gy, w, h, 1, 1);
    expect(r.components).toBe(2);
    expect(r.labels[0]).not.toBe(r.labels[9]);
    expect(r.labels[5]).toBe(-1);
  });
});
