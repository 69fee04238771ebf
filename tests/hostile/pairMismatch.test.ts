/**
 * The mismatched-pair detector (core diagnose/pairMismatch.ts) on both sides, with named scenarios:
 * it must fire on pairs whose images do not show the same background, and must not fire on the
 * genuine hard cases — an oblique shock smoothed over σ = 3 px (the end-to-end scene of
 * tests/endToEnd/scenarios.ts), image noise of 3 % of the dot peak, a natural-looking texture instead
 * of dots, a strong illumination change, a large uniform shift, and a pair decorrelated over part of
 * the image only. All images are the project's own synthetic ones; the ground truth is how they were
 * made. RHOFIELD_DETECTOR_REPORT=1 prints the detector's numbers per scenario.
 */
import { describe, expect, it } from 'vitest';
import {
  assessMaskCoverage,
  assessPairMatch,
  measureDisplacement,
  MIN_UNMASKED_SHARE,
  synthPair,
  VectorStatus,
  type DisplacementResult,
  type Field,
  type PairMatch,
} from '@rhofield/core';
import { shockCheck } from '../endToEnd/scenarios.js';

const W = 256;
const PEAK = 0.6 * 65535;

function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 4294967296);
}

function noiseImage(seed: number, w = W, h = W): Field {
  const r = lcg(seed);
  const d = new Float32Array(w * h);
  for (let i = 0; i < d.length; i++) d[i] = 255 * r();
  return { width: w, height: h, data: d };
}

/** Separable box blur of radius r (edges clamped). */
function boxBlur(f: Field, r: number): Field {
  const { width: w, height: h } = f;
  const tmp = new Float32Array(w * h);
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++)
    for (let x = 0; x < w; x++) {
      let s = 0;
      for (let k = -r; k <= r; k++) s += f.data[Math.min(w - 1, Math.max(0, x + k)) + y * w]!;
      tmp[x + y * w] = s / (2 * r + 1);
    }
  for (let y = 0; y < h; y++)
    for (let x = 0; x < w; x++) {
      let s = 0;
      for (let k = -r; k <= r; k++) s += tmp[x + Math.min(h - 1, Math.max(0, y + k)) * w]!;
      out[x + y * w] = s / (2 * r + 1);
    }
  return { width: w, height: h, data: out };
}

/**
 * A natural-looking texture (gravel, foliage, a painted wall): noise smoothed at scales of 1, 3 and 8 px
 * and summed with falling weights, so it has structure at many sizes and no distinct dots.
 */
function naturalTexture(seed: number, w: number, h: number): Field {
  const parts = [
    [1, 1],
    [3, 0.7],
    [8, 0.5],
  ] as const;
  const out = new Float32Array(w * h);
  parts.forEach(([r, weight], k) => {
    const b = boxBlur(noiseImage(seed + k, w, h), r);
    for (let i = 0; i < out.length; i++) out[i]! += weight * b.data[i]!;
  });
  return { width: w, height: h, data: out };
}

function crop(f: Field, x0: number, y0: number, w: number, h: number): Field {
  const d = new Float32Array(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) d[x + y * w] = f.data[x + x0 + (y + y0) * f.width]!;
  return { width: w, height: h, data: d };
}

const measure = (a: Field, b: Field, o: Parameters<typeof measureDisplacement>[2] = {}) => measureDisplacement(a, b, { threads: 1, ...o });

const report = (name: string, m: PairMatch) => {
  if (process.env['RHOFIELD_DETECTOR_REPORT']) {
    process.stdout.write(`${name}: vectors ${m.vectors}, strong share ${m.strongShare.toFixed(3)}, flagged share ${m.flaggedShare.toFixed(3)}, median correlation ${m.medianCorrelation.toFixed(3)} → ${m.mismatched ? 'MISMATCH' : 'match'}\n`);
  }
};

/** Scenarios that must be refused: the two images do not show the same background. */
const MISMATCHED: Record<string, () => Promise<DisplacementResult>> = {
  'two unrelated noise images': () => measure(noiseImage(1), noiseImage(2)),
  'two different dot patterns (wrong reference)': async () => {
    const a = synthPair({ width: W, height: W, diameterPx: 3, dotsPerWindow: 10, seed: 3, bitDepth: 16 });
    const b = synthPair({ width: W, height: W, diameterPx: 3, dotsPerWindow: 10, seed: 9, bitDepth: 16 });
    return measure(a.ref, b.meas);
  },
  'a dot image against a natural texture': async () => {
    const a = synthPair({ width: W, height: W, diameterPx: 3, dotsPerWindow: 10, seed: 4, bitDepth: 8 });
    return measure(a.ref, naturalTexture(21, W, W));
  },
  'unrelated dot patterns, single pass (as check runs it)': async () => {
    const a = synthPair({ width: W, height: W, diameterPx: 2.8, dotsPerWindow: 10, seed: 12, bitDepth: 16 });
    const b = synthPair({ width: W, height: W, diameterPx: 2.8, dotsPerWindow: 10, seed: 13, bitDepth: 16 });
    return measure(a.ref, b.ref, { passes: 1 });
  },
};

/** Genuine hard cases that must be accepted. */
const GENUINE: Record<string, () => Promise<DisplacementResult>> = {
  'oblique shock smoothed over σ = 3 px (body masked)': async () => (await shockCheck({ sizePx: 256, windowPx: 32, seed: 7, threads: 1 }, 3, 2)).run.displacement,
  'image noise 3 % of the dot peak': async () => {
    const p = synthPair({ width: W, height: W, diameterPx: 2.8, dotsPerWindow: 10, seed: 5, bitDepth: 16, peak: PEAK, noiseSigma: 0.03 * PEAK, displacement: { kind: 'uniform', dx: 2.3, dy: -1.1 } });
    return measure(p.ref, p.meas);
  },
  'image noise 20 % of the dot peak (no clear peaks left, but few vectors flagged)': async () => {
    const p = synthPair({ width: W, height: W, diameterPx: 2.8, dotsPerWindow: 10, seed: 5, bitDepth: 16, peak: PEAK, noiseSigma: 0.2 * PEAK, displacement: { kind: 'uniform', dx: 2.3, dy: -1.1 } });
    return measure(p.ref, p.meas);
  },
  'dot images of 10 px (heavy blur)': async () => {
    const p = synthPair({ width: W, height: W, diameterPx: 10, dotsPerWindow: 10, seed: 5, bitDepth: 16, peak: PEAK, noiseSigma: 0.02 * PEAK, displacement: { kind: 'uniform', dx: 2.3, dy: -1.1 } });
    return measure(p.ref, p.meas);
  },
  'natural texture instead of dots, shifted (2, 1) px': async () => {
    const t = naturalTexture(7, W + 8, W + 8);
    return measure(crop(t, 4, 4, W, W), crop(t, 6, 5, W, W));
  },
  'illumination change: gain 0.5 → 1.3 across the image plus an offset': async () => {
    const p = synthPair({ width: W, height: W, diameterPx: 3, dotsPerWindow: 10, seed: 4, bitDepth: 16, displacement: { kind: 'sine', amplitudePx: 2, wavelengthPx: 64, along: 'x', component: 'dx' } });
    const m = new Float32Array(p.meas.data.length);
    for (let i = 0; i < m.length; i++) m[i] = Math.min(65535, p.meas.data[i]! * (0.5 + (0.8 * (i % W)) / W) + 3000);
    return measure(p.ref, { ...p.meas, data: m });
  },
  'large uniform shift 7.93 px (the largest of the displacement bench)': async () => {
    const p = synthPair({ width: W, height: W, diameterPx: 2.8, dotsPerWindow: 10, seed: 11, bitDepth: 16, displacement: { kind: 'uniform', dx: 7.93, dy: -4.76 } });
    return measure(p.ref, p.meas);
  },
  'decorrelated over the right 40 % only (a flame in part of the view)': async () => {
    const p = synthPair({ width: W, height: W, diameterPx: 3, dotsPerWindow: 10, seed: 6, bitDepth: 16, displacement: { kind: 'uniform', dx: 0.8, dy: 0.3 } });
    const q = synthPair({ width: W, height: W, diameterPx: 3, dotsPerWindow: 10, seed: 60, bitDepth: 16 });
    const m = Float32Array.from(p.meas.data);
    for (let i = 0; i < m.length; i++) if (i % W >= 0.6 * W) m[i] = q.meas.data[i]!;
    return measure(p.ref, { ...p.meas, data: m });
  },
};

describe('mismatched pairs are detected', () => {
  for (const [name, make] of Object.entries(MISMATCHED)) {
    it(name, async () => {
      const m = assessPairMatch(await make());
      report(name, m);
      expect(m.mismatched, m.reason).toBe(true);
      expect(m.strongShare).toBeLessThan(0.1);
    });
  }
});

describe('genuine hard cases are not flagged', () => {
  for (const [name, make] of Object.entries(GENUINE)) {
    it(name, async () => {
      const m = assessPairMatch(await make());
      report(name, m);
      expect(m.mismatched, m.reason).toBe(false);
    });
  }
});

describe('the rule itself', () => {
  const field = (status: number[], corr: number[]) => ({ status: Uint8Array.from(status), correlation: { width: status.length, height: 1, data: Float32Array.from(corr) } });
  it('needs both a low share of strong peaks and many flagged vectors', () => {
    // 10 vectors, none strong, 3 flagged (30 %): mismatched
    expect(assessPairMatch(field([0, 0, 0, 0, 0, 0, 0, 1, 1, 3], Array(10).fill(0.2))).mismatched).toBe(true);
    // none strong but only 2 flagged (20 %): not enough evidence
    expect(assessPairMatch(field([0, 0, 0, 0, 0, 0, 0, 0, 1, 1], Array(10).fill(0.2))).mismatched).toBe(false);
    // one strong of 10 (10 %, not below 10 %): accepted
    expect(assessPairMatch(field([0, 0, 0, 0, 0, 0, 1, 1, 1, 1], [0.9, ...Array(9).fill(0.2)])).mismatched).toBe(false);
    // masked vectors do not count; fewer than 4 unmasked vectors: no verdict
    expect(assessPairMatch(field([2, 2, 2, 2, 2, 2, 2, 1, 1, 1], Array(10).fill(0.1))).mismatched).toBe(false);
    expect(assessPairMatch(field([2, 2, 2, 2, 2, 2, 1, 1, 1, 1], Array(10).fill(0.1))).mismatched).toBe(true);
  });
  it('mask coverage below 5 % is reported', () => {
    const st = (n: number, unmasked: number) => ({ status: Uint8Array.from({ length: n }, (_, i) => (i < unmasked ? VectorStatus.valid : VectorStatus.masked)) });
    expect(MIN_UNMASKED_SHARE).toBe(0.05);
    expect(assessMaskCoverage(st(100, 0)).tooLittle).toBe(true);
    expect(assessMaskCoverage(st(100, 4)).tooLittle).toBe(true);
    expect(assessMaskCoverage(st(100, 5)).tooLittle).toBe(false);
    expect(assessMaskCoverage(st(49, 1))).toMatchObject({ unmasked: 1, vectors: 49, tooLittle: true });
  });
});
