/**
 * The multi-pass schedule of {@link measureDisplacement}.
 *
 * Default (passes = 3, final window W, step s):
 *  1. coarse pass: windows of min(2W, 128) px (no larger than the image) laid every window side
 *     (no overlap), plain correlation of the images as recorded — a cheap predictor that tolerates
 *     displacements up to about a quarter of the coarse window;
 *  2. … passes: windows of W px every s px on the symmetrically deformed images (Scarano 2002): the
 *     previous pass's field, median-tested and replaced, is interpolated to every pixel (Keys cubic
 *     convolution over the grid), the reference is resampled at x − p/2 and the measurement at
 *     x + p/2 (Lanczos-4 in the last pass, Keys cubic in earlier ones), and the correlation measures
 *     the residual, which is added to the predictor at the window centre.
 * With passes = 2 both passes use W (the second deformed); passes = 1 is a single plain pass.
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
    return p.deform
      ? `${head}, images deformed symmetrically by the pass-${i} field (reference at x − d/2, measurement at x + d/2; ${
          i === plan.length - 1 ? ((o.interpolation ?? 'lanczos4') === 'lanczos4' ? 'Lanczos-4' : 'cubic B-spline') : 'Keys cubic'
        } resampling, field interpolated to pixels by Keys cubic convolution); the correlation measures the residual`
      : `${head}, plain FFT cross-correlation of the recorded images`;
  });
  lines.push(
    `after every pass: normalized median test over the 8 neighbours (threshold ${thr}, ε = ${eps} px); outliers replaced by the neighbour median` +
      (o.medianKeepPeakRatio !== undefined && o.medianKeepPeakRatio < Infinity ? ` unless their peak ratio is ≥ ${o.medianKeepPeakRatio}` : ''),
    'sub-pixel peak: three-point Gaussian fit (parabolic when a neighbour ≤ 0); peak ratio = primary / highest other local maximum outside the 3×3 neighbourhood',
  );
  return lines.join('\n');
}
