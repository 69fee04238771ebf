import { describe, expect, it } from 'vitest';
import { diagnoseImage, diagnosePair, globalShift, immerkaerNoise, createRng, type Field } from '@rhofield/core';
import { renderTestDots } from './renderTestDots.js';

/**
 * Ground truth: the test renderer (renderTestDots.ts) draws Gaussian dots of known e⁻² diameter D = 4σ,
 * integrated over pixels with the error function — independent of the library's renderer and estimator.
 */
describe('diagnoseImage(field) — dot image diameter from the autocorrelation width', () => {
  for (const D of [2, 2.5, 3, 4, 5, 6]) {
    it(`recovers a ${D} px e⁻² diameter within 10 %`, () => {
      // about 40 % of the area covered by dots, noise 1 % of the dot peak, seed fixed
      const f = renderTestDots({ width: 256, height: 256, diameterPx: D, density: 0.4 / ((Math.PI * D * D) / 4), seed: 11, noise: 10, background: 500 });
      const r = diagnoseImage(f);
      const err = Math.abs(r.dotDiameterPx / D - 1);
      expect(err, `D = ${D}: estimated ${r.dotDiameterPx.toFixed(3)} px, tolerance 10 %`).toBeLessThan(0.1);
      expect(r.usable).toBe(true);
      expect(r.dotPolarity).toBe('bright');
    });
  }
  it('dark dots on a bright background (a printed pattern) give the same diameter', () => {
    const f = renderTestDots({ width: 200, height: 180, diameterPx: 3, density: 0.4 / ((Math.PI * 9) / 4), seed: 5, noise: 10, background: 3000, dark: true });
    const r = diagnoseImage(f);
    expect(Math.abs(r.dotDiameterPx / 3 - 1)).toBeLessThan(0.1);
    expect(r.dotPolarity).toBe('dark');
  });
  it('small dots warn about peak locking; findings carry advice lines', () => {
    const f = renderTestDots({ width: 128, height: 128, diameterPx: 1.5, density: 0.15, seed: 2, noise: 5, background: 500 });
    const r = diagnoseImage(f);
    const d = r.findings.find((x) => x.key === 'diameter')!;
    expect(d.level).toBe('warning');
    expect(d.message).toMatch(/peak locking/);
    expect(d.advice).toMatch(/defocus slightly|coarser/);
  });
  it('noise estimate tracks strong added noise (σ = 100 counts) within 20 %', () => {
    const f = renderTestDots({ width: 256, height: 256, diameterPx: 3, density: 0.4 / ((Math.PI * 9) / 4), seed: 4, noise: 100, background: 2000 });
    const r = diagnoseImage(f);
    expect(Math.abs(r.noiseStd / 100 - 1)).toBeLessThan(0.2);
  });
});

describe('diagnoseImage — unusable images (verdict)', () => {
  it('a uniform (textureless) image is unusable', () => {
    const rng = createRng(1);
    const data = new Float32Array(64 * 64).map(() => 1000 + rng.normal());
    const r = diagnoseImage({ width: 64, height: 64, data });
    expect(r.usable).toBe(false);
    expect(r.findings.find((x) => x.level === 'unusable')!.message).toMatch(/no dot texture/);
  });
  it('more than 5 % saturated pixels is unusable', () => {
    const f = renderTestDots({ width: 128, height: 128, diameterPx: 3, density: 0.06, seed: 3, noise: 5, background: 200, peak: 3000 });
    const data = f.data.map((v) => Math.min(255, Math.max(0, Math.round(v / 4))));
    const r = diagnoseImage({ width: 128, height: 128, data }, { maxValue: 255 });
    expect(r.clippedHighFraction).toBeGreaterThan(0.05);
    expect(r.usable).toBe(false);
  });
});

describe('immerkaerNoise (Immerkær 1996, CVIU 64:300)', () => {
  it('recovers σ of white Gaussian noise on a smooth ramp within 3 %', () => {
    const rng = createRng(9);
    const W = 200;
    const data = new Float32Array(W * W);
    for (let y = 0; y < W; y++) for (let x = 0; x < W; x++) data[x + y * W] = 3 * x + 2 * y + 7 * rng.normal();
    expect(Math.abs(immerkaerNoise({ width: W, height: W, data }) / 7 - 1)).toBeLessThan(0.03);
  });
});

describe('globalShift / diagnosePair — camera moved?', () => {
  const base = { width: 192, height: 160, diameterPx: 3, density: 0.05, seed: 21, noise: 3, background: 400 };
  it('recovers a known shift (2.3, −1.6) px within 0.05 px', () => {
    const ref = renderTestDots(base);
    const meas = renderTestDots({ ...base, shiftX: 2.3, shiftY: -1.6 });
    const s = globalShift(ref, meas);
    expect(Math.abs(s.dxPx - 2.3)).toBeLessThan(0.05);
    expect(Math.abs(s.dyPx + 1.6)).toBeLessThan(0.05);
    const p = diagnosePair(ref, meas);
    expect(p.findings.find((f) => f.key === 'shift')!.level).toBe('warning');
  });
  it('zero shift is reported steady; mismatched sizes are a usage error', () => {
    const ref = renderTestDots(base);
    const p = diagnosePair(ref, renderTestDots(base));
    expect(Math.hypot(p.shift.dxPx, p.shift.dyPx)).toBeLessThan(0.02);
    expect(p.usable).toBe(true);
    const small: Field = { width: 64, height: 64, data: new Float32Array(64 * 64) };
    expect(() => diagnosePair(ref, small)).toThrow(/reference size/);
  });
});
