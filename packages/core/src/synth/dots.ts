/**
 * Synthetic random-dot images with known displacement: the ground truth for displacement accuracy
 * tests and benchmarks.
 *
 * Dot model: each dot is a 2-D Gaussian intensity density `a · peak · exp(−r²/(2σ²))` whose e⁻²
 * diameter is `diameterPx = 4σ` (docs/conventions.md). A pixel's value is the integral of that density over the
 * pixel's square area (pixel (i, j) covers [i − ½, i + ½] × [j − ½, j + ½]), which factorises into a
 * product of error-function differences, so the image is exact up to quantisation: the sum of one dot
 * over all pixels equals its analytic total `2πσ² · a · peak` (the Gaussian integral
 * ∫∫ exp(−r²/2σ²) dA = 2πσ²).
 */
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';
import { createRng } from '../util/rng.js';

/** Options of {@link generateDots}. */
export interface GenerateDotsOptions {
  /** Image width, px. */
  width: number;
  /** Image height, px. */
  height: number;
  /** e⁻² dot image diameter (4σ), px. */
  diameterPx: number;
  /** Mean number of dot centres per `windowPx × windowPx` window (default 10). Exclusive with `density`. */
  dotsPerWindow?: number;
  /** Mean number of dot centres per px². Exclusive with `dotsPerWindow`. */
  density?: number;
  /** Window side for `dotsPerWindow`, px (default 32). */
  windowPx?: number;
  /** Seed of the random positions and amplitudes. */
  seed: number;
  /**
   * Dots are also placed this far outside the image (px, default 16) so that a displaced image has
   * dots up to its border too; use at least the largest displacement plus the dot diameter.
   */
  margin?: number;
  /** Per-dot relative amplitude: `'random'` (default, uniform in [0.5, 1)) or a fixed number. */
  amplitude?: 'random' | number;
}

/** Dot centres (image px, pixel centres at integer coordinates) and relative peak amplitudes. */
export interface DotSet {
  readonly x: Float64Array;
  readonly y: Float64Array;
  /** Relative peak amplitude of each dot (multiplies the rendered `peak`). */
  readonly amplitude: Float64Array;
  readonly count: number;
  readonly width: number;
  readonly height: number;
  readonly diameterPx: number;
}

/** A displacement applied to every dot at its reference position, px (+x right, +y down). */
export type DotDisplacement =
  | ((x: number, y: number) => readonly [number, number])
  | { kind: 'uniform'; dx: number; dy: number }
  | { kind: 'sine'; amplitudePx: number; wavelengthPx: number; along: 'x' | 'y'; component: 'dx' | 'dy' };

/** Options of {@link renderDots}. */
export interface RenderDotsOptions {
  width: number;
  height: number;
  /** e⁻² dot diameter, px (default: the dot set's). */
  diameterPx?: number;
  /** Peak of the Gaussian intensity density of an amplitude-1 dot, counts (default 0.6 × full scale). */
  peak?: number;
  /** Uniform background level, counts (default 0.05 × full scale). */
  background?: number;
  /** 8 or 16 bit counts (default 8). Values are rounded and clipped to [0, 2^bitDepth − 1]. */
  bitDepth?: 8 | 16;
  /** Standard deviation of additive Gaussian noise, counts (default 0). */
  noiseSigma?: number;
  /** Seed of the noise (default 1). */
  seed?: number;
  /** Move each dot by this displacement evaluated at its reference position. */
  displacement?: DotDisplacement;
}

function positive(name: string, v: unknown): number {
  if (typeof v !== 'number' || !(v > 0) || !Number.isFinite(v)) throw invalidParameter(name, 'a positive finite number', v);
  return v;
}
function dimension(name: string, v: unknown): number {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < 1) throw invalidParameter(name, 'a positive integer (px)', v);
  return v;
}

/**
 * Random dot positions with a given density, uniform over the image plus a margin.
 * @returns a {@link DotSet}; the dot count is `round(density · area)` with the area including the margin.
 * @throws RhofieldError for non-positive sizes, density or diameter.
 */
export function generateDots(o: GenerateDotsOptions): DotSet {
  const width = dimension('width', o.width);
  const height = dimension('height', o.height);
  const diameterPx = positive('diameterPx', o.diameterPx);
  const windowPx = o.windowPx === undefined ? 32 : positive('windowPx', o.windowPx);
  if (o.density !== undefined && o.dotsPerWindow !== undefined)
    throw invalidParameter('density', 'either density or dotsPerWindow, not both', o.density);
  const density =
    o.density !== undefined ? positive('density', o.density) : positive('dotsPerWindow', o.dotsPerWindow ?? 10) / (windowPx * windowPx);
  const margin = o.margin === undefined ? 16 : o.margin;
  if (!(margin >= 0) || !Number.isFinite(margin)) throw invalidParameter('margin', 'a finite number ≥ 0 (px)', o.margin);
  const amp = o.amplitude ?? 'random';
  if (amp !== 'random' && !(typeof amp === 'number' && amp > 0 && Number.isFinite(amp)))
    throw invalidParameter('amplitude', "'random' or a positive number", amp);
  const x0 = -0.5 - margin;
  const y0 = -0.5 - margin;
  const w = width + 2 * margin;
  const h = height + 2 * margin;
  const count = Math.round(density * w * h);
  const rng = createRng(o.seed);
  const x = new Float64Array(count);
  const y = new Float64Array(count);
  const amplitude = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    x[i] = x0 + rng.next() * w;
    y[i] = y0 + rng.next() * h;
    amplitude[i] = amp === 'random' ? 0.5 + 0.5 * rng.next() : amp;
  }
  return { x, y, amplitude, count, width, height, diameterPx };
}

/**
 * Error function, accurate to about 1e-15: Maclaurin series for |x| < 3, and
 * erf = 1 − erfc with the Laplace continued fraction of erfc beyond (Abramowitz & Stegun 1964,
 * Handbook of Mathematical Functions, eqs. 7.1.5 and 7.1.14).
 */
export function erf(x: number): number {
  const ax = Math.abs(x);
  if (ax < 3) {
    const x2 = x * x;
    let term = x;
    let sum = x;
    for (let n = 1; n < 80; n++) {
      term *= -x2 / n;
      const add = term / (2 * n + 1);
      sum += add;
      if (Math.abs(add) < 1e-17 * Math.abs(sum)) break;
    }
    return (2 / Math.sqrt(Math.PI)) * sum;
  }
  if (ax > 6.5) return x > 0 ? 1 : -1;
  // erfc(x) = exp(−x²)/√π · 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + 2/(x + …))))), evaluated bottom-up
  let f = ax;
  for (let k = 60; k >= 1; k--) f = ax + k / 2 / f;
  const erfc = Math.exp(-ax * ax) / Math.sqrt(Math.PI) / f;
  return x > 0 ? 1 - erfc : erfc - 1;
}

/** Resolve a {@link DotDisplacement} to a function. */
export function displacementFunction(d: DotDisplacement): (x: number, y: number) => readonly [number, number] {
  if (typeof d === 'function') return d;
  if (d.kind === 'uniform') {
    const v = [d.dx, d.dy] as const;
    return () => v;
  }
  if (d.kind === 'sine') {
    const k = (2 * Math.PI) / d.wavelengthPx;
    return (x, y) => {
      const s = d.amplitudePx * Math.sin(k * (d.along === 'x' ? x : y));
      return d.component === 'dx' ? [s, 0] : [0, s];
    };
  }
  throw invalidParameter('displacement', "a function, {kind:'uniform'} or {kind:'sine'}", d);
}

/**
 * Render dots as an image with exact pixel integration of each Gaussian.
 * @param dots from {@link generateDots}.
 * @returns a Field of integer counts (float storage), 8- or 16-bit range.
 * @throws RhofieldError for bad sizes, bit depth or noise.
 */
export function renderDots(dots: DotSet, o: RenderDotsOptions): Field {
  const width = dimension('width', o.width);
  const height = dimension('height', o.height);
  const diameterPx = positive('diameterPx', o.diameterPx ?? dots.diameterPx);
  const bitDepth = o.bitDepth ?? 8;
  if (bitDepth !== 8 && bitDepth !== 16) throw invalidParameter('bitDepth', '8 or 16', o.bitDepth);
  const full = 2 ** bitDepth - 1;
  const peak = o.peak === undefined ? 0.6 * full : positive('peak', o.peak);
  const background = o.background ?? 0.05 * full;
  const noiseSigma = o.noiseSigma ?? 0;
  if (!(noiseSigma >= 0) || !Number.isFinite(noiseSigma)) throw invalidParameter('noiseSigma', 'a finite number ≥ 0 (counts)', o.noiseSigma);
  const disp = o.displacement === undefined ? undefined : displacementFunction(o.displacement);

  const acc = accumulateDots(dots, width, height, diameterPx, peak, disp);
  const data = new Float32Array(width * height);
  const rng = noiseSigma > 0 ? createRng(o.seed ?? 1) : undefined;
  for (let k = 0; k < data.length; k++) {
    let v = background + acc[k]!;
    if (rng) v += noiseSigma * rng.normal();
    v = Math.round(v);
    data[k] = v < 0 ? 0 : v > full ? full : v;
  }
  return { width, height, data };
}

/**
 * Unquantised, noise-free, background-free dot intensity (the exact pixel integrals that
 * {@link renderDots} rounds), for checks of the pixel integration itself.
 * @returns row-major Float64Array of width × height, counts.
 */
export function renderDotsUnquantised(
  dots: DotSet,
  o: { width: number; height: number; peak: number; diameterPx?: number; displacement?: DotDisplacement },
): Float64Array {
  const disp = o.displacement === undefined ? undefined : displacementFunction(o.displacement);
  return accumulateDots(dots, dimension('width', o.width), dimension('height', o.height), positive('diameterPx', o.diameterPx ?? dots.diameterPx), positive('peak', o.peak), disp);
}

function accumulateDots(
  dots: DotSet,
  width: number,
  height: number,
  diameterPx: number,
  peak: number,
  disp: ((x: number, y: number) => readonly [number, number]) | undefined,
): Float64Array {
  const sigma = diameterPx / 4;
  const s2 = sigma * Math.SQRT2;
  const c1 = sigma * Math.sqrt(Math.PI / 2); // ∫ exp(−t²/2σ²) dt = c1 · [erf]
  const reach = Math.ceil(6 * sigma + 1);
  const acc = new Float64Array(width * height);
  const ex = new Float64Array(2 * reach + 2);
  const ey = new Float64Array(2 * reach + 2);
  for (let i = 0; i < dots.count; i++) {
    let cx = dots.x[i]!;
    let cy = dots.y[i]!;
    if (disp) {
      const [dx, dy] = disp(cx, cy);
      cx += dx;
      cy += dy;
    }
    const ix0 = Math.max(0, Math.round(cx) - reach);
    const ix1 = Math.min(width - 1, Math.round(cx) + reach);
    const iy0 = Math.max(0, Math.round(cy) - reach);
    const iy1 = Math.min(height - 1, Math.round(cy) + reach);
    if (ix0 > ix1 || iy0 > iy1) continue;
    let prev = erf((ix0 - 0.5 - cx) / s2);
    for (let ix = ix0; ix <= ix1; ix++) {
      const next = erf((ix + 0.5 - cx) / s2);
      ex[ix - ix0] = c1 * (next - prev);
      prev = next;
    }
    prev = erf((iy0 - 0.5 - cy) / s2);
    for (let iy = iy0; iy <= iy1; iy++) {
      const next = erf((iy + 0.5 - cy) / s2);
      ey[iy - iy0] = c1 * (next - prev);
      prev = next;
    }
    const a = peak * dots.amplitude[i]!;
    for (let iy = iy0; iy <= iy1; iy++) {
      const wy = a * ey[iy - iy0]!;
      const row = iy * width;
      for (let ix = ix0; ix <= ix1; ix++) acc[row + ix]! += wy * ex[ix - ix0]!;
    }
  }
  return acc;
}

/** Options of {@link synthPair}: dot generation, rendering and the displacement of the second image. */
export interface SynthPairOptions extends Omit<GenerateDotsOptions, 'seed'>, Omit<RenderDotsOptions, 'width' | 'height' | 'seed' | 'displacement' | 'diameterPx'> {
  /** Seed of the dots; the noise of the two images uses seed + 1 and seed + 2 (default 1). */
  seed?: number;
  /** Displacement of the measurement image relative to the reference (default none). */
  displacement?: DotDisplacement;
}

/**
 * A reference image and a measurement image whose dots are moved by a known displacement.
 * @returns `{ ref, meas, dots }` — both images rendered from the same dot set with independent noise.
 */
export function synthPair(o: SynthPairOptions): { ref: Field; meas: Field; dots: DotSet } {
  const seed = o.seed ?? 1;
  const dots = generateDots({ ...o, seed });
  const common: RenderDotsOptions = { ...o, width: o.width, height: o.height };
  delete common.displacement;
  const ref = renderDots(dots, { ...common, seed: seed + 1 });
  const meas = renderDots(dots, { ...common, seed: seed + 2, ...(o.displacement ? { displacement: o.displacement } : {}) });
  return { ref, meas, dots };
}
