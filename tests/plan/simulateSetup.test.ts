import { describe, expect, it } from 'vitest';
import { parseSetup, simulateSetup, type Field, type SimulationEngines } from '@rhofield/core';
import type { DisplacementField } from '../../packages/core/src/correlate/types.js';
import { renderTestDots } from '../diagnose/renderTestDots.js';

/**
 * Plumbing check of the dry run with an oracle correlator: the "measured" displacement is the
 * renderer's own input displacement sampled at the window centres, so the only errors left are those
 * of the scene → blur → reconstruction chain. Sources: the planner's hand-worked numbers
 * (tests/plan/planSetup.test.ts); the density model Δρ·exp(−r²/L²) is the known input.
 */
const setup = parseSetup({
  camera: { focalLength: 0.1, fNumber: 22, pixelPitch: 6.5e-6, sensorPx: [2048, 2048] },
  geometry: { lensToBackground: 1.6, flowToBackground: 0.6 },
  medium: { gas: 'air', wavelength: 5.32e-7, referenceDensity: 1.18, pressure: 101325 },
  flow: { type: 'planar', span: 0.1, reference: 'top' },
  expected: { densityChange: -0.2, lengthScale: 0.006 },
});

function oracleEngines(): SimulationEngines & { last: { disp?: (x: number, y: number) => [number, number] } } {
  const last: { disp?: (x: number, y: number) => [number, number] } = {};
  return {
    last,
    renderPair(o) {
      last.disp = o.displacement;
      const base = { width: o.width, height: o.height, diameterPx: o.dotDiameterPx, density: o.fill / ((Math.PI * o.dotDiameterPx ** 2) / 4), seed: o.seed, background: 100, noise: o.noise * 1000 };
      return { reference: renderTestDots(base), measurement: renderTestDots({ ...base, displacement: o.displacement }) };
    },
    measure(ref: Field, _m: Field, o): DisplacementField {
      const step = o.windowPx / 2;
      const cols = Math.floor((ref.width - o.windowPx) / step) + 1;
      const rows = Math.floor((ref.height - o.windowPx) / step) + 1;
      const xPx = Float64Array.from({ length: cols }, (_, c) => c * step + (o.windowPx - 1) / 2);
      const yPx = Float64Array.from({ length: rows }, (_, r) => r * step + (o.windowPx - 1) / 2);
      const f = (): Field => ({ width: cols, height: rows, data: new Float32Array(cols * rows) });
      const dx = f(), dy = f(), pr = f(), cc = f();
      for (let r = 0; r < rows; r++) for (let c = 0; c < cols; c++) {
        const [a, b] = last.disp!(xPx[c]!, yPx[r]!);
        dx.data[c + r * cols] = a;
        dy.data[c + r * cols] = b;
        pr.data[c + r * cols] = 10;
        cc.data[c + r * cols] = 1;
      }
      return { grid: { cols, rows, xPx, yPx, imageWidth: ref.width, imageHeight: ref.height }, dxPx: dx, dyPx: dy, peakRatio: pr, correlation: cc, status: new Uint8Array(cols * rows) };
    },
  };
}

describe('simulateSetup(setup, engines, { field }) — chain plumbing with an oracle correlator', () => {
  it('planar Gaussian hot spot: peak displacement as planned (little blur at f/22), density within 5 % of the peak', async () => {
    const r = await simulateSetup(setup, oracleEngines(), { field: 'gaussian', sizePx: 192, windowPx: 16 });
    const e = r.errors;
    // blur (f/N)·Z_D/Z_B = 4.545 mm × 0.6/1.6 = 1.70 mm vs L = 6 mm: peak reduced by a few %
    expect(e.peakDisplacementTruePx / e.peakDisplacementPlannedPx).toBeGreaterThan(0.9);
    expect(e.peakDisplacementTruePx / e.peakDisplacementPlannedPx).toBeLessThanOrEqual(1.0001);
    expect(e.displacementRmsPx).toBeLessThan(0.02);
    expect(e.densityRmsRelative).toBeLessThan(0.05);
    // a hot spot is less dense than the room (physical sign)
    let minRho = Infinity;
    for (const v of r.density.rho.data) if (Number.isFinite(v)) minRho = Math.min(minRho, v);
    expect(minRho).toBeLessThan(1.18 - 0.1);
  });
});
