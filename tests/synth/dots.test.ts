import { describe, expect, it } from 'vitest';
import { erf, generateDots, renderDots, renderDotsUnquantised, synthPair, RhofieldError } from '@rhofield/core';

describe('renderDots: exact pixel integration of Gaussian dots', () => {
  it('erf matches published values (Abramowitz & Stegun 1964, Table 7.1)', () => {
    // A&S Table 7.1: erf(0.5) = 0.5204998778, erf(1) = 0.8427007929, erf(2) = 0.9953222650
    expect(erf(0.5)).toBeCloseTo(0.5204998778, 9);
    expect(erf(1)).toBeCloseTo(0.8427007929, 9);
    expect(erf(2)).toBeCloseTo(0.995322265, 9);
    expect(erf(-1)).toBeCloseTo(-0.8427007929, 9);
    expect(erf(3.5)).toBeCloseTo(0.9999992569, 9); // erfc(3.5) = 7.43098e-7 (A&S Table 7.1)
  });

  it('the pixel sum of one dot equals 2πσ²·peak (Gaussian integral ∫∫exp(−r²/2σ²) dA = 2πσ²)', () => {
    for (const [d, x, y] of [
      [2.5, 20.3, 19.71],
      [3, 21.5, 20.0],
      [4.2, 20.91, 21.13],
    ] as const) {
      const dots = { x: Float64Array.of(x), y: Float64Array.of(y), amplitude: Float64Array.of(0.8), count: 1, width: 41, height: 41, diameterPx: d };
      const img = renderDotsUnquantised(dots, { width: 41, height: 41, peak: 1000 });
      const sigma = d / 4;
      const total = img.reduce((a, b) => a + b, 0);
      const expected = 2 * Math.PI * sigma * sigma * 1000 * 0.8;
      expect(Math.abs(total - expected) / expected).toBeLessThan(1e-6);
    }
  });

  it('the intensity-weighted centroid of a dot is its sub-pixel centre', () => {
    // Poisson summation: for a pixel-integrated Gaussian the centroid equals x0 minus
    // Σ_k (−1)^{k+1} exp(−2π²k²σ²) sin(2πk x0)/(πk); for σ = 1 px that term is < 3e-9 px.
    const x0 = 20.37;
    const y0 = 19.82;
    const dots = { x: Float64Array.of(x0), y: Float64Array.of(y0), amplitude: Float64Array.of(1), count: 1, width: 41, height: 41, diameterPx: 4 };
    const img = renderDotsUnquantised(dots, { width: 41, height: 41, peak: 1 });
    let s = 0;
    let sx = 0;
    let sy = 0;
    for (let j = 0; j < 41; j++)
      for (let i = 0; i < 41; i++) {
        const v = img[i + j * 41]!;
        s += v;
        sx += v * i;
        sy += v * j;
      }
    expect(Math.abs(sx / s - x0)).toBeLessThan(1e-6);
    expect(Math.abs(sy / s - y0)).toBeLessThan(1e-6);
    // a small dot (σ = 0.625 px) follows the Poisson-summation correction
    const small = { ...dots, diameterPx: 2.5 };
    const im2 = renderDotsUnquantised(small, { width: 41, height: 41, peak: 1 });
    let t = 0;
    let tx = 0;
    for (let j = 0; j < 41; j++) for (let i = 0; i < 41; i++) (t += im2[i + j * 41]!), (tx += im2[i + j * 41]! * i);
    const sig = 0.625;
    let corr = 0;
    for (let k = 1; k < 20; k++) corr += ((-1) ** (k + 1) * Math.exp(-2 * Math.PI ** 2 * k * k * sig * sig) * Math.sin(2 * Math.PI * k * x0)) / (Math.PI * k);
    expect(Math.abs(tx / t - (x0 - corr))).toBeLessThan(1e-7);
  });

  it('generateDots places density × area dots (with margin) and renderDots quantises to counts', () => {
    const d = generateDots({ width: 64, height: 48, diameterPx: 3, dotsPerWindow: 10, windowPx: 32, seed: 3, margin: 0 });
    expect(d.count).toBe(Math.round((10 / 1024) * 64 * 48));
    const img = renderDots(d, { width: 64, height: 48, bitDepth: 8, noiseSigma: 2, seed: 9 });
    for (const v of img.data) {
      expect(Number.isInteger(v)).toBe(true);
      expect(v >= 0 && v <= 255).toBe(true);
    }
    const again = renderDots(d, { width: 64, height: 48, bitDepth: 8, noiseSigma: 2, seed: 9 });
    expect(Array.from(again.data)).toEqual(Array.from(img.data));
  });

  it('a uniform displacement moves every dot: whole-pixel shifts reproduce the reference shifted', () => {
    const { ref, meas } = synthPair({ width: 64, height: 64, diameterPx: 3, seed: 4, bitDepth: 16, displacement: { kind: 'uniform', dx: 3, dy: -2 } });
    for (let y = 4; y < 58; y++) for (let x = 4; x < 58; x++) expect(meas.data[x + 3 + (y - 2) * 64]).toBe(ref.data[x + y * 64]);
  });

  it('rejects bad sizes and bit depths with a message naming the option', () => {
    expect(() => generateDots({ width: 0, height: 10, diameterPx: 3, seed: 1 })).toThrow(/width/);
    expect(() => generateDots({ width: 10, height: 10, diameterPx: -1, seed: 1 })).toThrow(RhofieldError);
    const d = generateDots({ width: 10, height: 10, diameterPx: 3, seed: 1 });
    expect(() => renderDots(d, { width: 10, height: 10, bitDepth: 12 as 8 })).toThrow(/bitDepth/);
  });
});
