import { describe, expect, it } from 'vitest';
import { createSimulationEngines, parseSetup, simulateSetup } from '@rhofield/core';

/**
 * The whole dry-run chain with the library's own engines: dot images rendered by synth/dots.ts, the
 * displacement MEASURED by multi-pass correlation (measureDisplacement), density by reconstruction.
 *
 * Hand-worked planner prediction for this setup (thin lens; d = M·Z_D·eps/p, Richard & Raffel 2001,
 * Meas. Sci. Technol. 12:1576; K(532 nm) = 2.2702e-4 m³/kg computed from Ciddor 1996):
 *   M = f/(Z_B − f) = 0.05/1.45 = 0.0344828
 *   flow-plane pixel s = p·Z_A·(Z_B − f)/(f·Z_B) = 6.5e-6 × 1.0 × 1.45/(0.05 × 1.5) = 1.256667e-4 m
 *   L = 4.1 mm = 32.63 px, so the disturbance 2L = 65.3 px spans 4.08 windows of 16 px
 *   |∇ρ|max = √2·|Δρ|·e^(−1/2)/L = 1.414214 × 0.1 × 0.606531/0.0041 = 20.9211 kg/m⁴
 *   eps = K·W·|∇ρ|/n0 = 2.2702e-4 × 0.2 × 20.9211/1.000268 = 9.49646e-4 rad
 *   d = M·Z_D·eps/p = 0.0344828 × 0.5 × 9.49646e-4/6.5e-6 = 2.51895 px
 * Defocus blur (f/N)·Z_D/Z_B = 4.545 mm × 0.5/1.5 = 1.515 mm = 12.1 px, a little below L/2.
 */
const base = {
  camera: { focalLength: 0.05, fNumber: 11, pixelPitch: 6.5e-6, sensorPx: [1280, 1024] },
  geometry: { lensToBackground: 1.5, flowToBackground: 0.5 },
  medium: { gas: 'air', wavelength: 5.32e-7, referenceDensity: 1.18, pressure: 101325 },
  flow: { type: 'planar', span: 0.2, reference: 'top' },
  expected: { densityChange: -0.1, lengthScale: 0.0041 },
};
const setup = parseSetup(base);

describe('simulateSetup with createSimulationEngines — measured by correlation vs the planner', () => {
  for (const seed of [1, 2, 3]) {
    it(`hot spot 4.1 windows wide (16 px windows, seed ${seed}): measured peak within 5 % of the planned 2.519 px`, async () => {
      const r = await simulateSetup(setup, createSimulationEngines(), { field: 'gaussian', sizePx: 192, windowPx: 16, seed });
      expect(Math.abs(r.plan.maxDisplacementPx - 2.51895) / 2.51895).toBeLessThan(5e-4);
      expect(r.plan.disturbancePx / r.windowPx).toBeGreaterThanOrEqual(4);
      const e = r.errors;
      expect(Math.abs(e.peakDisplacementMeasuredPx / e.peakDisplacementPlannedPx - 1)).toBeLessThan(0.05);
      // the chain: sub-pixel displacement error, density within a few % of the peak
      expect(e.displacementRmsPx).toBeLessThan(0.1);
      expect(e.densityRmsRelative).toBeLessThan(0.05);
    });
  }
  it('32 px windows, disturbance 4 windows wide (L = 8.2 mm = 65 px): within 5 % too', async () => {
    const s = parseSetup({ ...base, expected: { densityChange: -0.2, lengthScale: 0.0082 } });
    const r = await simulateSetup(s, createSimulationEngines(), { field: 'gaussian', sizePx: 320, windowPx: 32, seed: 4 });
    expect(r.plan.disturbancePx / r.windowPx).toBeGreaterThanOrEqual(4);
    expect(Math.abs(r.errors.peakDisplacementMeasuredPx / r.errors.peakDisplacementPlannedPx - 1)).toBeLessThan(0.05);
  });
  it('axisymmetric plume: Abel inversion of the measured field recovers the axis density within 10 %', async () => {
    const s = parseSetup({ ...base, expected: { densityChange: -0.3, lengthScale: 0.006 } });
    const r = await simulateSetup(s, createSimulationEngines(), { field: 'plume', sizePx: 192, windowPx: 16, seed: 5 });
    expect(r.density.flowType).toBe('axisymmetric');
    expect(Math.abs(r.errors.densityPeakMeasured / r.errors.densityPeakTrue - 1)).toBeLessThan(0.1);
  });
  it('wedge shocks: the body is masked in both images and the correlator, the peak is followed with a narrow span', async () => {
    const s = parseSetup({ ...base, flow: { type: 'planar', span: 0.01, reference: 'left' } });
    const r = await simulateSetup(s, createSimulationEngines(), { field: 'shock', sizePx: 192, windowPx: 16, seed: 6, mach: 1.5, wedgeHalfAngleDeg: 5 });
    expect(r.mask).toBeDefined();
    let hidden = 0;
    for (const v of r.mask!.data) hidden += v ? 0 : 1;
    expect(hidden).toBeGreaterThan(100);
    expect(Number.isNaN(r.errors.peakDisplacementPlannedPx)).toBe(true);
    expect(Math.abs(r.errors.peakDisplacementMeasuredPx / r.errors.peakDisplacementTruePx - 1)).toBeLessThan(0.25);
  });
});
