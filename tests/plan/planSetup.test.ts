import { describe, expect, it } from 'vitest';
import { planSetup, formatPlan, RhofieldError } from '@rhofield/core';
import type { PlanSetupInput } from '@rhofield/core';

/**
 * Hand-worked example (a lab setup: f = 105 mm, air at 532 nm). Formulas: thin lens (M = f/(Z_B − f),
 * image distance v = f·Z_B/(Z_B − f)); BOS displacement d = M·Z_D·eps/p (Richard & Raffel 2001,
 * Meas. Sci. Technol. 12:1576); Gladstone–Dale n − 1 = K·ρ; K of air from Ciddor 1996 (Applied Optics
 * 35:1566) standard-air refractivity divided by standard-air density 1.22546 kg/m³ (computed from
 * those: K(532 nm) = 2.2702e-4 m³/kg).
 */
const setup: PlanSetupInput = {
  camera: { focalLength: 0.105, fNumber: 11, pixelPitch: 6.5e-6, sensorPx: [2560, 2160] },
  geometry: { lensToBackground: 2.4, flowToBackground: 0.9 },
  medium: { gas: 'air', wavelength: 5.32e-7, referenceDensity: 1.18, pressure: 101325 },
  flow: { type: 'planar', span: 0.08 },
  expected: { densityChange: -0.05, lengthScale: 0.01 },
};

const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

describe('planSetup(setup, { noisePx = 0.05 }) — hand-worked thin-lens example', () => {
  const pl = planSetup(setup);
  it('magnification and fields of view', () => {
    // M = f/(Z_B − f) = 0.105 / (2.4 − 0.105) = 0.105 / 2.295 = 0.0457516
    expect(rel(pl.magnification, 0.0457516)).toBeLessThan(1e-5);
    // background pixel = p/M = 6.5e-6 / 0.0457516 = 1.42071e-4 m; FOV = 2560 × 1.42071e-4 = 0.363703 m,
    // 2160 × 1.42071e-4 = 0.306874 m
    expect(rel(pl.fieldOfViewBackground[0], 0.363703)).toBeLessThan(1e-4);
    expect(rel(pl.fieldOfViewBackground[1], 0.306874)).toBeLessThan(1e-4);
    // Z_A = 2.4 − 0.9 = 1.5 m; flow pixel = p·Z_A·(Z_B − f)/(f·Z_B) = 6.5e-6 × 1.5 × 2.295 / (0.105 × 2.4)
    //   = 2.237625e-5 / 0.252 = 8.87946e-5 m; FOV at flow = 2560 × 8.87946e-5 = 0.227314 m
    expect(rel(pl.flowPixelSize, 8.87946e-5)).toBeLessThan(1e-4);
    expect(rel(pl.fieldOfViewFlow[0], 0.227314)).toBeLessThan(1e-4);
  });
  it('displacement of the Gaussian disturbance', () => {
    // K(532 nm) = 2.2702e-4 m³/kg (computed from Ciddor 1996); n0 = 1 + K·1.18 = 1.000268
    expect(rel(pl.gladstoneDale, 2.2702e-4)).toBeLessThan(2e-4);
    // |∇ρ|max = √2·|Δρ|·e^(−1/2)/L = 1.414214 × 0.05 × 0.606531 / 0.01 = 4.288819 kg/m⁴
    expect(rel(pl.maxDensityGradient, 4.288819)).toBeLessThan(1e-5);
    // eps = K·W·|∇ρ|/n0 = 2.2702e-4 × 0.08 × 4.288819 / 1.000268 = 7.78696e-5 rad
    expect(rel(pl.maxDeflection, 7.78696e-5)).toBeLessThan(3e-4);
    // d = M·Z_D·eps/p = 0.0457516 × 0.9 × 7.78696e-5 / 6.5e-6 = 0.493288 px
    expect(rel(pl.maxDisplacementPx, 0.493288)).toBeLessThan(3e-4);
    // smallest gradient: n0·0.05·p/(K·W·M·Z_D) = 1.000268 × 3.25e-7 / (2.2702e-4 × 0.08 × 0.0457516 × 0.9)
    //   = 3.250871e-7 / 7.478216e-7 = 0.434713 kg/m⁴ (= 4.288819 × 0.05 / 0.493288, consistent)
    expect(rel(pl.minDetectableGradient, 0.434713)).toBeLessThan(3e-4);
    expect(pl.noisePx).toBe(0.05);
  });
  it('blur, diffraction, dot size and verdict', () => {
    // aperture f/N = 0.105/11 = 9.54545e-3 m; blur = 9.54545e-3 × 0.9/2.4 = 3.57955e-3 m
    expect(rel(pl.flowBlur, 3.57955e-3)).toBeLessThan(1e-5);
    // diffraction = 2.44 × 11 × (1 + 0.0457516) × 5.32e-7 = 1.493279e-5 m = 2.29735 px (from memory, standard optics)
    expect(rel(pl.diffractionBlurPx, 2.29735)).toBeLessThan(1e-4);
    // dot: geometric part √((2.5 × 6.5e-6)² − 1.493279e-5²)/M = √(2.640625e-10 − 2.229882e-10)/0.0457516
    //   = 6.40893e-6/0.0457516 = 1.40081e-4 m → rounded to 0.05 mm: 0.15 mm
    expect(pl.recommendedDotDiameter).toBeCloseTo(0.15e-3, 9);
    // 0.49 px is < 10× the 0.05 px noise: weak, and the advice names a concrete change
    expect(pl.verdict).toBe('weak');
    expect(pl.advice).toMatch(/signal/);
    expect(formatPlan(pl)).toMatch(/from memory, standard optics/);
  });
});

describe('planSetup — other disturbances and bad input', () => {
  it('isobaric temperature change → density by the ideal gas law', () => {
    // T0 = p/(R·ρ0), R_air = 8.314462618/0.0289644 = 287.0569 J/(kg K) (US Std Atmosphere 1976 molar mass):
    // T0 = 101325/(287.0569 × 1.18) = 299.1380 K; ΔT = +30 K → Δρ = 1.18 × (299.1380/329.1380 − 1) = −0.107553
    const pl = planSetup({ ...setup, expected: { temperatureChange: 30, lengthScale: 0.01 } });
    expect(rel(pl.densityChange, -0.107553)).toBeLessThan(1e-4);
    expect(pl.notes.join(' ')).toMatch(/constant pressure/);
  });
  it('axisymmetric: effective span √π·L', () => {
    const pl = planSetup({ ...setup, flow: { type: 'axisymmetric', axis: 'vertical', axisPosition: 'auto' } });
    // eps = K·√(2π)·|Δρ|·e^(−1/2)/n0 = 2.2702e-4 × 2.506628 × 0.05 × 0.606531 / 1.000268 = 1.72535e-5 rad
    expect(rel(pl.maxDeflection, 1.72535e-5)).toBeLessThan(3e-4);
  });
  it('strong disturbance close to the lens → too strong, with a move-closer advice', () => {
    const pl = planSetup({ ...setup, expected: { densityChange: -0.5, lengthScale: 0.002 } });
    expect(pl.verdict).toBe('too strong');
    expect(pl.advice).toMatch(/closer/);
  });
  it('missing fNumber, flow behind the background, zero Δρ are usage errors naming the field', () => {
    const { fNumber: _n, ...cam } = setup.camera;
    expect(() => planSetup({ ...setup, camera: cam })).toThrow(/camera\.fNumber/);
    expect(() => planSetup({ ...setup, geometry: { lensToBackground: 1, flowToBackground: 1.2 } })).toThrow(/flowToBackground/);
    expect(() => planSetup({ ...setup, expected: { densityChange: 0, lengthScale: 0.01 } })).toThrow(RhofieldError);
    expect(() => planSetup(setup, { noisePx: -1 })).toThrow(/noisePx/);
  });
});
