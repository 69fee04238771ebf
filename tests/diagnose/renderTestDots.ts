/**
 * Independent test renderer: Gaussian dots of e⁻² diameter D (σ = D/4) at uniform random positions,
 * integrated exactly over each pixel with the error function, I = I0·Σ ∏_axes [Φ((x+½−x0)/σ) − Φ((x−½−x0)/σ)]·(2πσ²)·...
 * normalised so a dot's peak (unintegrated) intensity is `peak`. Ground truth for the diameter estimator.
 */
import { createRng, type Field } from '@rhofield/core';

/** erf by Abramowitz & Stegun 7.1.26 (|error| < 1.5e-7). */
function erf(x: number): number {
  const s = Math.sign(x);
  const a = Math.abs(x);
  const t = 1 / (1 + 0.3275911 * a);
  const y = 1 - ((((1.061405429 * t - 1.453152027) * t + 1.421413741) * t - 0.284496736) * t + 0.254829592) * t * Math.exp(-a * a);
  return s * y;
}

export function renderTestDots(o: { width: number; height: number; diameterPx: number; density: number; seed: number; peak?: number; background?: number; noise?: number; dark?: boolean; shiftX?: number; shiftY?: number; displacement?: (x: number, y: number) => [number, number] }): Field {
  const { width: W, height: H } = o;
  const sigma = o.diameterPx / 4;
  const peak = o.peak ?? 1000;
  const rng = createRng(o.seed);
  const img = new Float64Array(W * H);
  const n = Math.round(o.density * W * H);
  const R = Math.ceil(4 * sigma + 1);
  const k = Math.sqrt(Math.PI / 2) * sigma; // ∫ exp(−u²/2σ²) over a pixel = k·[erf((u+½)/(σ√2)) − erf((u−½)/(σ√2))]
  const ex = new Float64Array(2 * R + 1);
  const ey = new Float64Array(2 * R + 1);
  for (let i = 0; i < n; i++) {
    let x0 = -8 + rng.next() * (W + 16) + (o.shiftX ?? 0);
    let y0 = -8 + rng.next() * (H + 16) + (o.shiftY ?? 0);
    if (o.displacement) {
      const [ddx, ddy] = o.displacement(x0, y0);
      x0 += ddx;
      y0 += ddy;
    }
    const cx = Math.round(x0);
    const cy = Math.round(y0);
    for (let j = -R; j <= R; j++) {
      ex[j + R] = k * (erf((cx + j + 0.5 - x0) / (sigma * Math.SQRT2)) - erf((cx + j - 0.5 - x0) / (sigma * Math.SQRT2)));
      ey[j + R] = k * (erf((cy + j + 0.5 - y0) / (sigma * Math.SQRT2)) - erf((cy + j - 0.5 - y0) / (sigma * Math.SQRT2)));
    }
    for (let j = -R; j <= R; j++) {
      const y = cy + j;
      if (y < 0 || y >= H) continue;
      for (let i2 = -R; i2 <= R; i2++) {
        const x = cx + i2;
        if (x < 0 || x >= W) continue;
        img[x + y * W]! += peak * ex[i2 + R]! * ey[j + R]!;
      }
    }
  }
  const out = new Float32Array(W * H);
  const noiseRng = createRng(o.seed + 1_000_003);
  const bg = o.background ?? 100;
  for (let i = 0; i < W * H; i++) {
    const v = o.dark ? bg - img[i]! : bg + img[i]!;
    out[i] = v + (o.noise ? o.noise * noiseRng.normal() : 0);
  }
  return { width: W, height: H, data: out };
}
