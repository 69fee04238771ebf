import { describe, expect, it } from 'vitest';
import { obliqueShockAngle, obliqueShockDensityRatio, obliqueShockScene, parseSetup, planarGaussianScene, sceneBackgroundMask, sceneDisplacement } from '@rhofield/core';

const setup = parseSetup({
  camera: { focalLength: 0.1, pixelPitch: 5e-6 },
  geometry: { lensToBackground: 2.1, flowToBackground: 1.05 },
  medium: { gas: 'air', wavelength: 532e-9, referenceDensity: 1.2 },
  flow: { type: 'planar', span: 0.05, reference: 'top' },
});

describe('sign of the apparent displacement (hand-written expectations)', () => {
  // Physics: light bends toward higher refractive index. A hot, low-density spot has its lowest n at
  // the centre, so it acts as a diverging lens: a camera ray passing right of the centre bends
  // outward (right) and lands on a background point further right; the dot seen there therefore
  // appears displaced to the LEFT, toward the spot — as a mirage shows the sky below a hot road.
  // Likewise a dot below the spot (larger row) appears moved UP (negative dy).
  const hot = planarGaussianScene(setup, { amplitude: -0.05, sigmaM: 2e-3 });
  const d = sceneDisplacement(hot, setup, 201, 201); // spot at the image centre (100, 100)
  it('a dot right of the hot spot moves left, one left of it moves right', () => {
    expect(d(130, 100)[0]).toBeLessThan(0);
    expect(d(70, 100)[0]).toBeGreaterThan(0);
    expect(Math.abs(d(130, 100)[1])).toBeLessThan(1e-12);
  });
  it('a dot below the hot spot (larger row) moves up (dy < 0), one above moves down', () => {
    expect(d(100, 130)[1]).toBeLessThan(0);
    expect(d(100, 70)[1]).toBeGreaterThan(0);
  });
  it('a cold (denser) spot pushes dots away from its centre', () => {
    const cold = sceneDisplacement(planarGaussianScene(setup, { amplitude: 0.05, sigmaM: 2e-3 }), setup, 201, 201);
    expect(cold(130, 100)[0]).toBeGreaterThan(0);
    expect(cold(100, 130)[1]).toBeGreaterThan(0);
  });
});

describe('oblique shock (θ-β-M relation; NACA Report 1135, 1953, γ = 1.4)', () => {
  const deg = Math.PI / 180;
  for (const [M, th, beta, ratio] of [[2, 10, 39.314, 1.45843], [2, 5, 34.302, 1.21558], [2, 15, 45.344, 1.72892], [3, 10, 27.383, 1.65459]] as const) {
    it(`M = ${M}, θ = ${th}°: β = ${beta}°, ρ₂/ρ₁ = ${ratio} (weak branch)`, () => {
      expect(Math.abs(obliqueShockAngle(M, th * deg) / deg - beta)).toBeLessThan(0.001);
      expect(Math.abs(obliqueShockDensityRatio(M, th * deg) - ratio)).toBeLessThan(1e-5);
    });
  }
  it('normal-shock limit: strong branch at θ → 0 gives (γ+1)M²/((γ−1)M²+2) = 2.66667 for M = 2', () => {
    expect(obliqueShockDensityRatio(2, 1e-9, 1.4, 'strong')).toBeCloseTo(2.66667, 4);
  });
  it('detached shock (θ = 30° > θmax ≈ 22.97° at M = 2) is refused', () => {
    expect(() => obliqueShockAngle(2, 30 * deg)).toThrow(/detachment angle 22\.97/);
  });
  it('wedge scene: body hides the background, density jumps by the ratio across the shock', () => {
    const s = obliqueShockScene(setup, { apexM: [0, 0] });
    expect(s.hidden(1e-3, 0)).toBe(true);
    expect(Number.isNaN(s.density(1e-3, 0))).toBe(true);
    expect(s.density(-5e-3, 0)).toBeCloseTo(1.2, 6);
    // far behind the shock, between shock and wedge: x = 20 mm, y = 10 mm (shock at y = 16.4 mm, wedge at 3.5 mm)
    expect(s.density(20e-3, 10e-3) / 1.2).toBeCloseTo(1.45843, 4);
    const m = sceneBackgroundMask(s, setup, 64, 32);
    expect(m.data[60 + 16 * 64]).toBe(0);
    expect(m.data[5 + 16 * 64]).toBe(1);
  });
});
