import { describe, expect, it } from 'vitest';
import {
  axisymmetricGaussianScene,
  obliqueShockScene,
  planarGaussianScene,
  reconstructDensity,
  sceneDensityOnGrid,
  sceneDisplacementOnGrid,
} from '@rhofield/core';
import { displacementField, grid, rig } from './helpers.js';

// Ground truth: the project's own scene generator (exact deflection → displacement on the grid);
// this checks the reconstruction chain, not the generator's physics (see tests/synth for that).

describe('reconstructDensity — planar', () => {
  const setup = rig({ type: 'planar', span: 0.05, reference: 'top' });
  const g = grid(512, 512, 8);
  const scene = planarGaussianScene(setup, { amplitude: -0.1, sigmaM: 2e-3 }); // σ = 40 px = 5 grid steps
  const { dxPx, dyPx } = sceneDisplacementOnGrid(scene, setup, g);
  const truth = sceneDensityOnGrid(scene, setup, g);

  it('hot spot (Δρ = −0.1 kg/m³) comes out less dense than the surroundings, RMS error ≤ 1 % of |Δρ| (DCT)', () => {
    const r = reconstructDensity(displacementField(g, dxPx, dyPx), setup);
    expect(r.summary.method).toBe('dct');
    let e = 0;
    for (let i = 0; i < truth.data.length; i++) e += (r.rho.data[i]! - truth.data[i]!) ** 2;
    expect(Math.sqrt(e / truth.data.length)).toBeLessThan(0.001);
    const centre = 32 + 32 * g.cols;
    expect(r.rho.data[centre]!).toBeLessThan(1.2 - 0.09);
    expect(r.summary.min).toBeLessThan(1.11);
    expect(r.xM.length).toBe(g.cols);
    expect(r.yM[0]!).toBeGreaterThan(0); // row 0 is at the top: y_m up
    expect(r.temperature).toBeNull();
  });
  it('masked disc of missing vectors: CG result within 1 % of |Δρ| elsewhere, NaN inside', () => {
    const dx = { ...dxPx, data: dxPx.data.slice() };
    const dy = { ...dyPx, data: dyPx.data.slice() };
    for (let r = 0; r < g.rows; r++) for (let c = 0; c < g.cols; c++) if ((c - 45) ** 2 + (r - 40) ** 2 < 36) dx.data[c + r * g.cols] = dy.data[c + r * g.cols] = NaN;
    const r = reconstructDensity(displacementField(g, dx, dy), setup);
    expect(r.summary.method).toBe('cg');
    let e = 0, n = 0;
    for (let i = 0; i < truth.data.length; i++) {
      if (Number.isNaN(dx.data[i]!)) {
        expect(Number.isNaN(r.rho.data[i]!)).toBe(true);
        continue;
      }
      e += (r.rho.data[i]! - truth.data[i]!) ** 2;
      n++;
    }
    expect(Math.sqrt(e / n)).toBeLessThan(0.001);
  });
  it('temperature T = p/(ρR) with the constant-pressure note; far field 101325/(1.2·287.058) = 294.1 K (hand-worked)', () => {
    const s = rig({ type: 'planar', span: 0.05, reference: 'top' }, { pressure: 101325 });
    const r = reconstructDensity(displacementField(g, dxPx, dyPx), s);
    expect(r.temperature).not.toBeNull();
    expect(r.temperature!.data[0]!).toBeCloseTo(294.14, 1);
    expect(r.temperature!.data[32 + 32 * g.cols]!).toBeGreaterThan(315); // hot spot
    expect(r.notes.join(' ')).toMatch(/constant pressure/);
    expect(r.notes.join(' ')).toMatch(/composition/);
  });
  it('reference rectangle and errors in the message form', () => {
    const s = rig({ type: 'planar', span: 0.05, reference: { rectPx: [0, 0, 100, 100] } });
    const r = reconstructDensity(displacementField(g, dxPx, dyPx), s);
    expect(r.summary.reference).toMatch(/rectangle/);
    const dx = { ...dxPx, data: dxPx.data.slice() };
    for (let c = 0; c < g.cols; c++) dx.data[c] = NaN;
    expect(() => reconstructDensity(displacementField(g, dx, dyPx), setup)).toThrow(/expected at least one valid vector in the reference region \(the top edge of the vector grid\) for flow.reference but received a region whose 64 vectors are all masked or failed/);
  });
});

describe('reconstructDensity — axisymmetric', () => {
  const g = grid(384, 256, 4);
  it('Gaussian jet about a vertical axis found by symmetry: within 1 % of |Δρ| for r ≥ 2 steps', () => {
    const setup = rig({ type: 'axisymmetric', axis: 'vertical', axisPosition: 'auto' });
    const scene = axisymmetricGaussianScene(setup, { amplitude: -0.2, sigmaM: 1.6e-3, axisM: 0.3e-3 }); // σ = 32 px = 8 steps, axis 6 px right of centre
    const { dxPx, dyPx } = sceneDisplacementOnGrid(scene, setup, g);
    const truth = sceneDensityOnGrid(scene, setup, g);
    const r = reconstructDensity(displacementField(g, dxPx, dyPx), setup);
    expect(r.summary.method).toBe('abel');
    expect(Math.abs(r.axisPx! - (191.5 + 6))).toBeLessThan(0.2);
    for (let i = 0; i < truth.data.length; i++) {
      if (r.rM!.data[i]! < 2 * 4 * 50e-6) continue;
      expect(Math.abs(r.rho.data[i]! - truth.data[i]!)).toBeLessThan(0.002);
    }
  });
  it('horizontal axis given in px; an axis outside the image is an input error', () => {
    const setup = rig({ type: 'axisymmetric', axis: 'horizontal', axisPosition: 127.5 });
    const scene = axisymmetricGaussianScene(setup, { amplitude: 0.3, sigmaM: 1.6e-3, axis: 'horizontal' });
    const { dxPx, dyPx } = sceneDisplacementOnGrid(scene, setup, g);
    const truth = sceneDensityOnGrid(scene, setup, g);
    const r = reconstructDensity(displacementField(g, dxPx, dyPx), setup);
    let worst = 0;
    for (let i = 0; i < truth.data.length; i++) if (r.rM!.data[i]! >= 8 * 50e-6) worst = Math.max(worst, Math.abs(r.rho.data[i]! - truth.data[i]!));
    expect(worst).toBeLessThan(0.003);
    const bad = rig({ type: 'axisymmetric', axis: 'horizontal', axisPosition: 300 });
    expect(() => reconstructDensity(displacementField(g, dxPx, dyPx), bad)).toThrow('expected a row inside the image (0–255 px) for flow.axisPosition but received 300');
  });
});

describe('reconstructDensity — wedge shock with the body masked', () => {
  it('plateau behind the shock = 1.45843·ρ1 within 1 % (NACA Report 1135, M = 2, θ = 10°)', () => {
    const setup = rig({ type: 'planar', span: 0.05, reference: 'left' });
    const g = grid(512, 256, 8);
    const scene = obliqueShockScene(setup, { apexM: [-4e-3, 0] });
    const { dxPx, dyPx } = sceneDisplacementOnGrid(scene, setup, g);
    const r = reconstructDensity(displacementField(g, dxPx, dyPx), setup);
    const truth = sceneDensityOnGrid(scene, setup, g);
    let n = 0;
    for (let i = 0; i < truth.data.length; i++) {
      if (Math.abs(truth.data[i]! - 1.2 * 1.45843) < 1e-4) {
        expect(Math.abs(r.rho.data[i]! / 1.2 - 1.45843)).toBeLessThan(0.0146);
        n++;
      }
    }
    expect(n).toBeGreaterThan(50);
  });
});
