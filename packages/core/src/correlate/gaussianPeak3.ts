/**
 * Three-point Gaussian sub-pixel peak estimator with a parabolic fallback.
 *
 * For three samples c₋, c₀, c₊ at −1, 0, +1 around a discrete maximum, the Gaussian fit gives
 *   δ = (ln c₋ − ln c₊) / (2 ln c₋ − 4 ln c₀ + 2 ln c₊),
 * which is exact for samples of a Gaussian exp(−(x − x₀)²/2s²). When a sample is ≤ 0 the logarithm is
 * undefined, so the parabola through the three points is used instead:
 *   δ = (c₋ − c₊) / (2c₋ − 4c₀ + 2c₊).
 * The result is clamped to [−0.5, 0.5] (c₀ is the discrete maximum, so the true peak lies within half
 * a sample); a degenerate (flat) triple gives 0.
 *
 * Reference: C. E. Willert & M. Gharib, "Digital particle image velocimetry", Experiments in Fluids
 * 10:181–193 (1991), doi:10.1007/BF00190388.
 *
 * @param cm sample at −1; @param c0 sample at 0 (the maximum); @param cp sample at +1.
 * @returns the sub-sample offset of the peak from the centre sample, in samples.
 */
export function gaussianPeak3(cm: number, c0: number, cp: number): number {
  let d: number;
  if (cm > 0 && c0 > 0 && cp > 0) {
    const lm = Math.log(cm);
    const l0 = Math.log(c0);
    const lp = Math.log(cp);
    const den = 2 * lm - 4 * l0 + 2 * lp;
    d = den < 0 ? (lm - lp) / den : 0;
  } else {
    const den = 2 * cm - 4 * c0 + 2 * cp;
    d = den < 0 ? (cm - cp) / den : 0;
  }
  return d > 0.5 ? 0.5 : d < -0.5 ? -0.5 : d;
}
