/**
 * Dot image diameter from the width of the autocorrelation peak (dot-diameter convention: docs/conventions.md).
 *
 * Model: dots with a Gaussian intensity profile of standard deviation σ (e⁻² diameter 4σ) at random,
 * uncorrelated positions, integrated over square pixels of unit fill factor. The autocorrelation of
 * such an image is the dot's self-correlation — a Gaussian of variance 2σ² (width × √2) — convolved in
 * each axis with the self-correlation of the pixel box, a triangle of variance 1/6 (so the pixel-
 * integrated variance per image is σ² + 1/12 px², the usual correction). The model
 * `R(kx, ky) = A·F(kx)·F(ky)`, `F = Gauss(2σ²) ∗ triangle`, is fitted to lags 0 < |k| ≤ `fitLag`
 * (the zero lag is excluded: it carries the white-noise variance) by least squares in A (linear) and
 * σ (golden-section search on ln σ). The excess `R(0,0) − A·F(0)²` is the white-noise variance.
 *
 * Reference for the convention: Adrian & Westerweel, Particle Image Velocimetry, Cambridge UP, 2011
 * (particle image diameter as the e⁻² diameter; autocorrelation width relation, from memory).
 */
import type { Autocorrelation } from './meanAutocorrelation.js';

/** Result of the fit. */
export interface AutocorrelationFit {
  /** σ of the dot's Gaussian profile before pixel integration, px. */
  readonly sigmaPx: number;
  /** e⁻² dot image diameter 4σ, px. */
  readonly diameterPx: number;
  /** Fitted signal variance A·F(0)² (intensity units²). */
  readonly signalVariance: number;
  /** White-noise variance from the zero-lag excess (≥ 0). */
  readonly noiseVariance: number;
  /** RMS misfit relative to the signal variance. */
  readonly misfit: number;
}

/** Self-correlation of a pixel-integrated Gaussian along one axis at integer lag k (unnormalised). */
function axisModel(k: number, s2: number): number {
  // ∫_{−1}^{1} (1 − |u|)·exp(−(k − u)²/(2·s2)) du, Simpson with 64 intervals.
  const m = 64;
  const h = 2 / m;
  let sum = 0;
  for (let i = 0; i <= m; i++) {
    const u = -1 + i * h;
    const w = i === 0 || i === m ? 1 : i % 2 ? 4 : 2;
    sum += w * (1 - Math.abs(u)) * Math.exp(-((k - u) ** 2) / (2 * s2));
  }
  return (sum * h) / 3;
}

/**
 * Fit the dot model to an autocorrelation.
 * @param ac from {@link meanAutocorrelation}.
 * @param fitLag largest |kx|, |ky| used (default: min(8, ac.maxLag)).
 * @returns the fit; NaN diameter when the autocorrelation has no positive peak (textureless image).
 */
export function dotDiameterFromAutocorrelation(ac: Autocorrelation, fitLag = Math.min(8, ac.maxLag)): AutocorrelationFit {
  const L = Math.min(fitLag, ac.maxLag);
  const r0 = ac.at(0, 0);
  const nan = { sigmaPx: NaN, diameterPx: NaN, signalVariance: 0, noiseVariance: Math.max(0, r0 || 0), misfit: NaN };
  if (!(r0 > 0) || !(ac.at(1, 0) + ac.at(0, 1) > 0)) return nan;
  const lags: Array<[number, number, number]> = [];
  for (let ky = -L; ky <= L; ky++) for (let kx = -L; kx <= L; kx++) if (kx || ky) lags.push([kx, ky, ac.at(kx, ky)]);
  const cost = (lnSigma: number): { e: number; A: number; F0: number } => {
    const sigma = Math.exp(lnSigma);
    const s2 = 2 * sigma * sigma;
    const F = new Float64Array(L + 1);
    for (let k = 0; k <= L; k++) F[k] = axisModel(k, s2);
    let rm = 0;
    let mm = 0;
    for (const [kx, ky, r] of lags) {
      const m = F[Math.abs(kx)]! * F[Math.abs(ky)]!;
      rm += r * m;
      mm += m * m;
    }
    const A = rm / mm;
    let e = 0;
    for (const [kx, ky, r] of lags) e += (r - A * F[Math.abs(kx)]! * F[Math.abs(ky)]!) ** 2;
    return { e, A, F0: F[0]! };
  };
  let a = Math.log(0.1);
  let b = Math.log(8);
  const g = (Math.sqrt(5) - 1) / 2;
  let c = b - g * (b - a);
  let d = a + g * (b - a);
  let fc = cost(c).e;
  let fd = cost(d).e;
  for (let i = 0; i < 60; i++) {
    if (fc < fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - g * (b - a);
      fc = cost(c).e;
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + g * (b - a);
      fd = cost(d).e;
    }
  }
  const ln = (a + b) / 2;
  const best = cost(ln);
  const sigma = Math.exp(ln);
  const signal = best.A * best.F0 * best.F0;
  if (!(signal > 0)) return nan;
  return {
    sigmaPx: sigma,
    diameterPx: 4 * sigma,
    signalVariance: signal,
    noiseVariance: Math.max(0, r0 - signal),
    misfit: Math.sqrt(best.e / lags.length) / signal,
  };
}
