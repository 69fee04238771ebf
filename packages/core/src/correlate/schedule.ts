/**
 * The multi-pass schedule of {@link measureDisplacement}.
 *
 * Default (passes = 3, final window W, step s):
 *  1. coarse pass: windows of min(2W, 128) px (no larger than the image) laid every window side
 *     (no overlap), FFT correlation of the 2×2-binned images with half-size windows (the same image
 *     area for a quarter of the work; without a mask) — a cheap predictor that tolerates
 *     displacements up to about a quarter of the coarse window;
 *  2. … passes: windows of W px every s px on the symmetrically deformed images (Scarano 2002): the
 *     previous pass's field, median-tested and replaced, is interpolated to every pixel (Keys cubic
 *     convolution over the grid), the reference is resampled at x − p/2 and the measurement at
 *     x + p/2 (Lanczos-4 in the last pass, Keys cubic in earlier ones), and the correlation (lags
 *     ≤ 2 px directly, again around the maximum when it lies 1 px off lag 0, the FFT plane where it
 *     is still off-centre) measures the residual, which is added to the predictor at the window centre.
 * With passes = 2 both passes use W (the second deformed); passes = 1 is a single pass on the recorded
 * images. A pass on the recorded images at the final window size (passes 1–2) correlates each window
 * pair twice: once as is, then with the measurement window moved by the whole-pixel result (discrete
 * window offset: J. Westerweel, D. Dabiri & M. Gharib, Exp. Fluids 23:20–28, 1997, recalled from memory), which removes the loss of pairs of the whole-pixel
 * part of the displacement.
 * Every pass ends with the normalized median test and replacement (Westerweel & Scarano 2005).
 *
 * Reference: F. Scarano, "Iterative image deformation methods in PIV", Measurement Science and
 * Technology 13:R1–R19 (2002), doi:10.1088/0957-0233/13/1/201.
 */

/** One pass of the schedule. */
export interface PassPlan {
  windowPx: number;
  stepPx: number;
  /** Whether the images are deformed by the previous pass's field. */
  deform: boolean;
}

/** Options that shape the schedule. */
export interface ScheduleOptions {
  windowPx?: number;
  stepPx?: number;
  passes?: number;
  medianThreshold?: number;
  medianEpsilonPx?: number;
  interpolation?: 'lanczos4' | 'bspline3';
  medianKeepPeakRatio?: number;
  medianKeepCorrelation?: number;
  refine?: 'direct' | 'fft';
  hasMask?: boolean;
  /** Image size, when known (limits the coarse window). */
  width?: number;
  height?: number;
}

/** The passes for the given options (already validated by the caller, or defaults). */
export function buildSchedule(o: ScheduleOptions): PassPlan[] {
  const W = o.windowPx ?? 32;
  const step = o.stepPx ?? Math.max(1, W / 2);
  const passes = o.passes ?? 3;
  const side = Math.min(o.width ?? Infinity, o.height ?? Infinity);
  const plan: PassPlan[] = [];
  if (passes >= 3) {
    let coarse = Math.min(2 * W, 128);
    while (coarse > W && coarse > side) coarse /= 2;
    plan.push({ windowPx: coarse, stepPx: coarse === W ? step : coarse, deform: false });
  } else plan.push({ windowPx: W, stepPx: step, deform: false });
  while (plan.length < passes) plan.push({ windowPx: W, stepPx: step, deform: true });
  return plan;
}

/** The keep-or-replace rule of the median test, in words. */
function keepRule(ratio: number, corr: number): string {
  const parts: string[] = [];
  if (ratio < Infinity) parts.push(`their peak ratio (whole FFT correlation plane) is ≥ ${ratio}`);
  if (corr < Infinity) parts.push(`their normalized correlation peak is ≥ ${corr}`);
  return parts.length ? ` unless ${parts.join(' or ')}` : ' (every flagged vector, as published)';
}

/**
 * A human-readable description of the pass schedule for the given options (printed by the CLI's
 * --help and stored in result manifests).
 */
export function describeSchedule(o: ScheduleOptions = {}): string {
  const plan = buildSchedule(o);
  const thr = o.medianThreshold ?? 2;
  const eps = o.medianEpsilonPx ?? 0.1;
  const lines = plan.map((p, i) => {
    const head = `pass ${i + 1}: ${p.windowPx} px windows every ${p.stepPx} px`;
    const binned = i === 0 && !p.deform && plan.length > 1 && p.windowPx > (o.windowPx ?? 32) && !o.hasMask && p.stepPx % 2 === 0;
    const corr =
      (o.refine ?? 'direct') === 'direct'
        ? 'the residual is measured by correlation over lags ≤ 2 px (again around the maximum when it lies 1 px off lag 0; the whole FFT plane where it is still off-centre)'
        : 'the residual is measured by FFT cross-correlation';
    return p.deform
      ? `${head}, images deformed symmetrically by the pass-${i} field (reference at x − d/2, measurement at x + d/2; ${
          i === plan.length - 1 ? ((o.interpolation ?? 'lanczos4') === 'lanczos4' ? 'Lanczos-4' : 'cubic B-spline') : 'Keys cubic'
        } resampling, field interpolated to pixels by Keys cubic convolution); ${corr}, then added to the field at the window centre`
      : binned
        ? `${head}, FFT cross-correlation of the 2×2-binned images (${p.windowPx / 2} px binned windows): a cheap predictor`
        : p.windowPx === (o.windowPx ?? 32)
          ? `${head}, FFT cross-correlation of the recorded images, repeated with the measurement window moved by the whole-pixel result (discrete window offset)`
          : `${head}, FFT cross-correlation of the recorded images`;
  });
  lines.push(
    `after every pass: normalized median test over the 8 neighbours (threshold ${thr}, ε = ${eps} px); outliers replaced by the neighbour median` +
      keepRule(o.medianKeepPeakRatio ?? 3, o.medianKeepCorrelation ?? 0.7),
    'sub-pixel peak: three-point Gaussian fit (parabolic when a neighbour ≤ 0) after undoing the loss-of-pairs weighting; peak ratio = primary / highest other local maximum outside the 3×3 neighbourhood' +
      ((o.refine ?? 'direct') === 'direct' ? ' (for lag-limited vectors: / highest value at lag distance 2)' : ''),
  );
  return lines.join('\n');
}
