import { describe, expect, it } from 'vitest';
import {
  colourSchlieren,
  contourLines,
  contourView,
  divergence,
  knifeEdge,
  knifeEdgeView,
  shadowgraphView,
  viewFigure,
  type Field,
} from '@rhofield/core';

function field(W: number, H: number, f: (x: number, y: number) => number): Field {
  const data = new Float32Array(W * H);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) data[x + y * W] = f(x, y);
  return { width: W, height: H, data };
}

const W = 9;
const H = 6;
const ex = field(W, H, (x, y) => 0.3 * x - 0.2 * y + 0.05);
const ey = field(W, H, (x, y) => -0.1 * x + 0.4 * y - 0.7);

describe('knifeEdge(x, y, angleDeg): component along the direction (counter-clockwise as seen)', () => {
  it('0° = x component (vertical knife edge), 90° = upward component = −y_image, 180° = −x', () => {
    expect(Array.from(knifeEdge(ex, ey, 0).data)).toEqual(Array.from(ex.data));
    expect(Array.from(knifeEdge(ex, ey, 90).data)).toEqual(Array.from(ey.data, (v) => -v + 0));
    expect(Array.from(knifeEdge(ex, ey, 180).data)).toEqual(Array.from(ex.data, (v) => -v + 0));
  });
  it('45° = (x − y_image)/√2 (projection on the unit vector (cos 45°, sin 45°) in y-up axes)', () => {
    const k = knifeEdge(ex, ey, 45).data;
    for (let i = 0; i < k.length; i++) expect(k[i]).toBeCloseTo((ex.data[i]! - ey.data[i]!) / Math.SQRT2, 6);
  });
  it('view: grey, symmetric range = max |component|; NaN passes through', () => {
    const nx = field(3, 1, (x) => (x === 1 ? NaN : x - 1.5));
    const v = knifeEdgeView(nx, field(3, 1, () => 0), { unit: 'rad' });
    expect(v.colormap).toBe('grey');
    expect(v.range).toEqual([-1.5, 1.5]);
    expect(Number.isNaN(v.field.data[1]!)).toBe(true);
  });
  it('rejects components of different sizes naming both', () => {
    expect(() => knifeEdge(ex, field(3, 3, () => 0), 0)).toThrow(/9×6.*3×3/);
  });
});

describe('colourSchlieren(x, y): hue = direction, brightness = magnitude (HSV, Smith 1978)', () => {
  // Check values from the HSV hexcone definition (Smith, "Color gamut transform pairs", 1978):
  // hue 0° red (1,0,0), 90° (0.5,1,0), 180° cyan (0,1,1), 270° (0.5,0,1); V scales all channels.
  const dirs: [number, number, number[]][] = [
    [1, 0, [255, 0, 0]], // +x → 0° → red
    [0, -1, [128, 255, 0]], // up (−y_image) → 90°
    [-1, 0, [0, 255, 255]], // −x → 180° → cyan
    [0, 1, [128, 0, 255]], // down (+y_image) → 270°
  ];
  it('unit vectors in the four directions get the hues 0°, 90°, 180°, 270° at full brightness', () => {
    const x = field(4, 1, (i) => dirs[i]![0]);
    const y = field(4, 1, (i) => dirs[i]![1]);
    const v = colourSchlieren(x, y, { unit: 'rad' });
    expect(v.maxMagnitude).toBe(1);
    dirs.forEach(([, , rgb], i) => expect(Array.from(v.image.data.subarray(3 * i, 3 * i + 3)), `direction ${i}`).toEqual(rgb));
  });
  it('a purely +x field is red whatever its size; half magnitude → half brightness; NaN → invalid', () => {
    const x = field(3, 1, (i) => [2, 1, NaN][i]!);
    const y = field(3, 1, () => 0);
    const v = colourSchlieren(x, y, { unit: 'px' });
    expect(Array.from(v.image.data.subarray(0, 6))).toEqual([255, 0, 0, 128, 0, 0]);
    expect(Array.from(v.image.valid!)).toEqual([1, 1, 0]);
  });
});

describe('divergence(x, y, hx, hy) and shadowgraph', () => {
  // ε = ∇g for g = A·exp(−r²/s²): ∇·ε = ∇²g = g·(4r²/s⁴ − 4/s²) (analytic Laplacian of a Gaussian).
  const A = 2e-3;
  const s = 4e-3; // m
  function run(h: number) {
    const n = Math.round(0.032 / h);
    const c = (n - 1) / 2;
    const g = (x: number, y: number) => A * Math.exp(-((x - c) ** 2 + (y - c) ** 2) * (h * h) / (s * s));
    const gx = field(n, n, (x, y) => ((-2 * (x - c) * h) / (s * s)) * g(x, y));
    const gy = field(n, n, (x, y) => ((-2 * (y - c) * h) / (s * s)) * g(x, y));
    const div = divergence(gx, gy, h, h);
    let err = 0;
    let peak = 0;
    for (let y = 1; y < n - 1; y++) {
      for (let x = 1; x < n - 1; x++) {
        const r2 = ((x - c) ** 2 + (y - c) ** 2) * h * h;
        const exact = g(x, y) * ((4 * r2) / s ** 4 - 4 / s ** 2);
        err = Math.max(err, Math.abs(div.data[x + y * n]! - exact));
        peak = Math.max(peak, Math.abs(exact));
      }
    }
    return { err, peak, gx, gy, div, n };
  }
  it('equals the analytic Laplacian of a Gaussian within the truncation error of central differences', () => {
    // Leading error of a central difference of the exact gradient: (h²/6)·∂⁴g/∂x⁴ per axis; at the
    // centre ∂⁴g/∂x⁴ = 12A/s⁴ and ∇²g = −4A/s², so the peak relative error is (h/s)² (Taylor series).
    const h = 5e-4;
    const { err, peak } = run(h);
    const predicted = (h / s) ** 2;
    expect(err / peak).toBeGreaterThan(0.85 * predicted);
    expect(err / peak).toBeLessThan(1.15 * predicted);
  });
  it('error falls about 4× when h halves (second-order central differences)', () => {
    const a = run(1e-3);
    const b = run(5e-4);
    const ratio = a.err / b.err;
    expect(ratio).toBeGreaterThan(3.3);
    expect(ratio).toBeLessThan(4.7);
  });
  it('uniform field: divergence 0; linear field: exact everywhere including edges', () => {
    const lin = divergence(field(5, 4, (x) => 3 * x), field(5, 4, (_, y) => -y), 0.5, 2);
    for (const v of lin.data) expect(v).toBeCloseTo(3 / 0.5 - 1 / 2, 6);
  });
  it('shadowgraph view shows −∇·ε (converging rays bright) on a symmetric grey scale', () => {
    const { gx, gy, div } = run(1e-3);
    const v = shadowgraphView(gx, gy, { hx: 1e-3, hy: 1e-3, unit: 'rad/m' });
    expect(v.colormap).toBe('grey');
    for (let i = 0; i < div.data.length; i += 37) expect(v.field.data[i]).toBe(-div.data[i]!);
    expect(v.range[0]).toBe(-v.range[1]);
  });
});

describe('contourLines(field, levels): marching squares (Lorensen & Cline 1987, 2-D form)', () => {
  it('linear field: every crossing lies exactly on the level line x + 2y = level', () => {
    const f = field(12, 10, (x, y) => x + 2 * y);
    const [c] = contourLines(f, [7.3]);
    expect(c!.segments.length).toBeGreaterThan(0);
    for (let k = 0; k < c!.segments.length; k += 2) expect(c!.segments[k]! + 2 * c!.segments[k + 1]!).toBeCloseTo(7.3, 9);
  });
  it('radial field: the contour is a closed circle of radius R (points within 0.02 cells, length 2πR within 1 %)', () => {
    const n = 41;
    const R = 12;
    const f = field(n, n, (x, y) => (x - 20) ** 2 + (y - 20) ** 2);
    const [c] = contourLines(f, [R * R]);
    const s = c!.segments;
    let len = 0;
    for (let k = 0; k < s.length; k += 4) {
      for (const j of [k, k + 2]) expect(Math.abs(Math.hypot(s[j]! - 20, s[j + 1]! - 20) - R)).toBeLessThan(0.02);
      len += Math.hypot(s[k + 2]! - s[k]!, s[k + 3]! - s[k + 1]!);
    }
    expect(Math.abs(len / (2 * Math.PI * R) - 1)).toBeLessThan(0.01);
  });
  it('saddle cell gives two segments; NaN cells give none', () => {
    const saddle = { width: 2, height: 2, data: Float32Array.of(1, 0, 0, 1) };
    expect(contourLines(saddle, [0.4])[0]!.segments.length).toBe(8);
    const withNan = { width: 2, height: 2, data: Float32Array.of(1, 0, NaN, 1) };
    expect(contourLines(withNan, [0.4])[0]!.segments.length).toBe(0);
  });
  it('contourView picks nice levels inside the data range', () => {
    const v = contourView(field(10, 10, (x) => 1.103 + 0.01 * x), { quantity: 'density', unit: 'kg/m³' });
    expect(v.contours!.map((c) => Math.round(c.level * 1000) / 1000)).toEqual([1.11, 1.12, 1.13, 1.14, 1.15, 1.16, 1.17, 1.18, 1.19]);
    expect(v.range[0]).toBeCloseTo(1.103, 6);
  });
});

describe('viewFigure(view, frame)', () => {
  it('colour schlieren gets a colour-wheel key; a contour view draws lines and marks levels', () => {
    const cs = viewFigure(colourSchlieren(ex, ey, { unit: 'mrad' }), { xMm: [0, 8], yMm: [5, 0], title: 'colour' });
    expect(cs.svg).toContain('>hue: direction</text>');
    expect(cs.svg).toMatch(/full at [\d.]+ mrad/);
    expect((cs.svg.match(/data:image\/png/g) ?? []).length).toBeGreaterThanOrEqual(2); // picture + wheel
    const cv = viewFigure(contourView(ex, { quantity: 'q', unit: '1' }), { xMm: [0, 8], yMm: [5, 0] });
    expect(cv.svg).toMatch(/stroke-width="0.9" stroke-linecap="round"/);
  });
});
