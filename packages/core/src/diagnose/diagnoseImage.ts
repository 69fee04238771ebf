/**
 * Check one BOS image (usually the reference) before measuring: dot image diameter, dots per window,
 * contrast, clipped pixels, noise and focus, each with a plain-language advice line, and a verdict.
 *
 * Methods:
 * - dot image diameter: width of the mean autocorrelation peak, ÷√2 and corrected for pixel
 *   integration (docs/conventions.md), see {@link dotDiameterFromAutocorrelation};
 * - noise: white-noise variance = zero-lag excess of the autocorrelation over the dot model
 *   (noise is uncorrelated between pixels, the dots are not). It resolves noise down to about a
 *   tenth of the texture standard deviation (random scatter of one frame's autocorrelation shape, and
 *   a bias of that order for dots under 2.5 px); Immerkær 1996 (CVIU 64:300) is reported alongside
 *   as an upper bound (dot texture leaks through its mask);
 * - dots per window: local extrema above the median by max(3·noise, 20 % of the 99.5th-percentile
 *   excursion), per area, times window² (see {@link countDots});
 * - contrast: Michelson contrast of the 1st and 99th percentiles, (p99 − p1)/(p99 + p1);
 * - clipped: fraction of pixels at 0 or at the saturation count (given, or the smallest of 1, 255,
 *   1023, 4095, 16383, 65535 not below the image maximum);
 * - focus: variance of the Laplacian over the signal variance (Pech-Pacheco et al. 2000, "Diatom
 *   autofocusing in brightfield microscopy", ICPR 2000), a relative sharpness index; the dot diameter
 *   is the quantity the advice uses.
 * Thresholds are common practice for correlation (2–3 px dots, ≥ 10 dots per window; Keane & Adrian
 * 1992; Raffel et al., Particle Image Velocimetry, 2018) unless stated.
 */
import type { Field } from '../util/field.js';
import { invalidParameter } from '../util/errors.js';
import { meanAutocorrelation } from './meanAutocorrelation.js';
import { dotDiameterFromAutocorrelation } from './dotDiameterFromAutocorrelation.js';
import { immerkaerNoise } from './immerkaerNoise.js';
import { countDots } from './countDots.js';

/** Severity of one finding. */
export type FindingLevel = 'ok' | 'warning' | 'unusable';

/** One checked quantity with advice. */
export interface Finding {
  readonly key: 'diameter' | 'dots' | 'contrast' | 'clipping' | 'noise' | 'focus' | 'shift' | 'correlation' | 'size' | 'match';
  readonly level: FindingLevel;
  /** What was found, one line. */
  readonly message: string;
  /** What to do, one line. */
  readonly advice: string;
}

/** Options of {@link diagnoseImage}. */
export interface DiagnoseOptions {
  /** Interrogation window side used for the dots-per-window figure, px (default 32). */
  readonly windowPx?: number;
  /** Saturation count of the camera (default: inferred from the image maximum). */
  readonly maxValue?: number;
}

/** Result of {@link diagnoseImage}. */
export interface ImageDiagnosis {
  readonly width: number;
  readonly height: number;
  /** e⁻² dot image diameter (4σ before pixel integration), px. NaN when no texture. */
  readonly dotDiameterPx: number;
  readonly dotPolarity: 'bright' | 'dark';
  readonly dotCount: number;
  readonly windowPx: number;
  readonly dotsPerWindow: number;
  readonly mean: number;
  readonly contrast: number;
  readonly maxValue: number;
  readonly clippedFraction: number;
  readonly clippedLowFraction: number;
  readonly clippedHighFraction: number;
  /** White-noise standard deviation, intensity units. */
  readonly noiseStd: number;
  /** Immerkær 1996 estimate (upper bound on dot images). */
  readonly noiseStdImmerkaer: number;
  /** Signal std (dot texture) over noise std. */
  readonly signalToNoise: number;
  readonly focusIndex: number;
  readonly usable: boolean;
  readonly findings: readonly Finding[];
}

const SATURATION_LEVELS = [1, 255, 1023, 4095, 16383, 65535];

function percentiles(d: Float32Array, ps: readonly number[]): number[] {
  const step = Math.max(1, Math.floor(d.length / 1_000_000));
  const s: number[] = [];
  for (let i = 0; i < d.length; i += step) if (Number.isFinite(d[i]!)) s.push(d[i]!);
  const a = Float64Array.from(s).sort();
  return ps.map((p) => (a.length ? a[Math.min(a.length - 1, Math.max(0, Math.round(p * (a.length - 1))))]! : NaN));
}

/**
 * Check an image for BOS measurement.
 * @param field grey image (any scale; NaN pixels ignored).
 * @param opts windowPx (default 32), maxValue (saturation count; default inferred).
 * @returns diagnosis with findings; `usable` false when a finding is "unusable".
 * @throws RhofieldError (usage) for images smaller than 16×16 or bad options.
 */
export function diagnoseImage(field: Field, opts: DiagnoseOptions = {}): ImageDiagnosis {
  const windowPx = opts.windowPx ?? 32;
  if (!(Number.isInteger(windowPx) && windowPx >= 4)) throw invalidParameter('windowPx', 'an integer ≥ 4', windowPx);
  const { width: W, height: H, data: d } = field;
  if (W < 16 || H < 16) throw invalidParameter('image size', 'at least 16 × 16 px', `${W} × ${H}`);
  let n = 0;
  let sum = 0;
  let max = -Infinity;
  for (let i = 0; i < d.length; i++) {
    const v = d[i]!;
    if (Number.isFinite(v)) {
      n++;
      sum += v;
      if (v > max) max = v;
    }
  }
  const mean = sum / n;
  const maxValue = opts.maxValue ?? SATURATION_LEVELS.find((l) => l >= max) ?? max;
  let lo = 0;
  let hi = 0;
  for (let i = 0; i < d.length; i++) {
    const v = d[i]!;
    if (v <= 0) lo++;
    else if (v >= maxValue) hi++;
  }
  const clippedLow = lo / n;
  const clippedHigh = hi / n;
  const [p01, p50, p99, p005, p995] = percentiles(d, [0.01, 0.5, 0.99, 0.005, 0.995]) as [number, number, number, number, number];
  const contrast = p99 + p01 > 0 ? (p99 - p01) / (p99 + p01) : 0;
  // Dots occupy the tail: bright dots pull the 99.5th percentile farther from the median than the 0.5th.
  const bright = p995 - p50 >= p50 - p005;

  const ac = meanAutocorrelation(field);
  const fit = dotDiameterFromAutocorrelation(ac);
  const noiseStd = Math.sqrt(fit.noiseVariance);
  const signalStd = Math.sqrt(fit.signalVariance);
  const snr = noiseStd > 0 ? signalStd / noiseStd : signalStd > 0 ? Infinity : 0;
  const excursion = bright ? p995 - p50 : p50 - p005;
  const dotCount = countDots(field, bright, p50, Math.max(3 * noiseStd, 0.2 * excursion, 1e-12));
  const dotsPerWindow = (dotCount / ((W - 2) * (H - 2))) * windowPx * windowPx;

  let lap = 0;
  let lapN = 0;
  for (let y = 1; y < H - 1; y++) for (let x = 1; x < W - 1; x++) {
    const i = x + y * W;
    const v = d[i - 1]! + d[i + 1]! + d[i - W]! + d[i + W]! - 4 * d[i]!;
    if (Number.isFinite(v)) {
      lap += v * v;
      lapN++;
    }
  }
  const focusIndex = fit.signalVariance > 0 ? lap / lapN / fit.signalVariance : 0;

  const F: Finding[] = [];
  const dia = fit.diameterPx;
  const textureless = !(dia > 0) || snr < 2 || contrast < 0.005;
  if (textureless) {
    F.push({ key: 'diameter', level: 'unusable', message: `no dot texture found (texture/noise ${snr.toFixed(1)}, contrast ${contrast.toFixed(3)})`, advice: 'check that the background is in view, lit and in focus; a uniform image cannot be correlated' });
  } else if (dia < 1) {
    F.push({ key: 'diameter', level: 'unusable', message: `dot images ${dia.toFixed(2)} px (e⁻²): smaller than a pixel`, advice: 'dots this small alias and lock to whole pixels; use a coarser pattern or defocus slightly' });
  } else if (dia < 2) {
    F.push({ key: 'diameter', level: 'warning', message: `dot images ${dia.toFixed(2)} px: risk of peak locking`, advice: 'defocus slightly or use a coarser pattern to reach 2–3 px' });
  } else if (dia > 6) {
    F.push({ key: 'diameter', level: 'warning', message: `dot images ${dia.toFixed(2)} px: large (out of focus, or pattern too coarse)`, advice: 'focus on the background, close the aperture a little or print smaller dots; large dots cost precision and resolution' });
  } else {
    F.push({ key: 'diameter', level: 'ok', message: `dot images ${dia.toFixed(2)} px`, advice: dia <= 3.5 ? 'good size for correlation (2–3 px is common practice)' : 'usable; 2–3 px would give the best precision' });
  }
  if (!textureless) {
    const dpw = dotsPerWindow;
    const need = Math.ceil(Math.sqrt(10 / (dotCount / ((W - 2) * (H - 2)))));
    F.push(
      dpw >= 10
        ? { key: 'dots', level: 'ok', message: `${dpw.toFixed(1)} dots per ${windowPx} px window`, advice: 'enough dots per window (≥ 10 is common practice)' }
        : { key: 'dots', level: 'warning', message: `only ${dpw.toFixed(1)} dots per ${windowPx} px window`, advice: `use windows of at least ${need} px or a denser pattern (≥ 10 dots per window is common practice)` },
    );
  }
  F.push(
    contrast < 0.1
      ? { key: 'contrast', level: 'warning', message: `low contrast ${contrast.toFixed(3)} (Michelson, 1st–99th percentile)`, advice: 'increase exposure or lighting, or print darker dots on whiter paper' }
      : { key: 'contrast', level: 'ok', message: `contrast ${contrast.toFixed(2)}`, advice: 'fine' },
  );
  const clipped = clippedLow + clippedHigh;
  F.push(
    clipped > 0.05
      ? { key: 'clipping', level: 'unusable', message: `${(100 * clipped).toFixed(1)} % of pixels clipped (${(100 * clippedHigh).toFixed(1)} % at ${maxValue}, ${(100 * clippedLow).toFixed(1)} % at 0)`, advice: clippedHigh >= clippedLow ? 'reduce exposure or lamp power: saturated dots lose their sub-pixel shape' : 'increase exposure or lift the black level: clipped shadows lose the dot shape' }
      : clipped > 0.005
        ? { key: 'clipping', level: 'warning', message: `${(100 * clipped).toFixed(2)} % of pixels clipped`, advice: 'reduce the exposure slightly so no pixel sits at 0 or at saturation' }
        : { key: 'clipping', level: 'ok', message: `${(100 * clipped).toFixed(2)} % of pixels clipped`, advice: 'fine' },
  );
  if (!textureless) {
    F.push(
      snr < 5
        ? { key: 'noise', level: 'warning', message: `noisy: dot texture only ${snr.toFixed(1)}× the noise (${noiseStd.toPrecision(3)} counts)`, advice: 'more light or a longer exposure; average several reference frames' }
        : snr > 10
          ? { key: 'noise', level: 'ok', message: 'texture/noise above 10 (the noise is below what one frame resolves)', advice: 'fine' }
          : { key: 'noise', level: 'ok', message: `noise ${noiseStd.toPrecision(3)} counts, texture/noise ${snr.toFixed(1)}`, advice: 'acceptable; more light would help precision' },
    );
    F.push({ key: 'focus', level: 'ok', message: `focus index ${focusIndex.toPrecision(3)} (Laplacian variance / texture variance; higher is sharper)`, advice: dia > 6 ? 'dots look blurred: refocus on the background' : 'compare between frames: a drop means the focus moved' });
  }
  return {
    width: W,
    height: H,
    dotDiameterPx: dia,
    dotPolarity: bright ? 'bright' : 'dark',
    dotCount,
    windowPx,
    dotsPerWindow,
    mean,
    contrast,
    maxValue,
    clippedFraction: clipped,
    clippedLowFraction: clippedLow,
    clippedHighFraction: clippedHigh,
    noiseStd,
    noiseStdImmerkaer: immerkaerNoise(field),
    signalToNoise: snr,
    focusIndex,
    usable: !F.some((f) => f.level === 'unusable'),
    findings: F,
  };
}
