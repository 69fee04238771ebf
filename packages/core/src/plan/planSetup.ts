/**
 * Setup planner: what a planned BOS setup will see, before anything is built.
 *
 * Formulas and sources (thin lens, paraxial, camera focused on the background):
 * - background magnification `M = f/(Z_B − f)` (thin lens);
 * - field of view at the background = sensor size · p / M; in the flow plane = sensor size · s_flow with
 *   `s_flow = p·Z_A·(Z_B − f)/(f·Z_B)`, `Z_A = Z_B − Z_D` (thin lens: image distance `v = f·Z_B/(Z_B − f)`,
 *   flow plane imaged with magnification `v/Z_A`);
 * - displacement `|d| = M·Z_D·|eps|/p` px (Richard & Raffel 2001, Meas. Sci. Technol. 12:1576;
 *   Raffel 2015, Exp. Fluids 56:60);
 * - deflection of a planar disturbance of span W: `eps = K·W·|∇ρ|/n0` (Gladstone–Dale, `n − 1 = K·ρ`);
 * - defocus blur of the flow in object space ≈ aperture diameter × Z_D/Z_B = `(f/N)·Z_D/Z_B` (thin lens,
 *   similar triangles of the ray cone from a background point to the aperture; Raffel 2015 discusses it);
 * - diffraction-limited image diameter `2.44·N·(1 + M)·λ` (from memory, standard optics: the Airy-disc
 *   diameter at the image distance `(1 + M)·f`);
 * - dot image diameter `d_τ = √((M·D)² + d_diff²)` (quadrature of the geometric image and the diffraction
 *   spot, common practice in particle imaging; from memory), target 2.5 px (common practice: 2–3 px, e⁻²).
 *
 * Disturbance model (stated in the result): a Gaussian `Δρ·exp(−r²/L²)`.
 * - planar (uniform over the span W along the line of sight): `|∇ρ|max = √2·|Δρ|·e^{−1/2}/L` at `r = L/√2`;
 * - axisymmetric (r measured from the axis): the line-of-sight integral of the gradient is
 *   `∂/∂y [√π·L·Δρ·exp(−y²/L²)]`, maximal `√(2π)·|Δρ|·e^{−1/2}` at `y = L/√2`, i.e. an effective
 *   span `W = √π·L` applied to the planar maximum gradient.
 * Isobaric temperature change: `ρ = p/(R·T)` so `Δρ = ρ0·(T0/(T0 + ΔT) − 1)`, `T0 = p/(R·ρ0)`.
 */
import { RhofieldError, invalidParameter } from '../util/errors.js';
import { mediumConstants } from '../optics/medium.js';
import type { PlanSetupInput } from './types.js';
import { recommendDotDiameter } from './recommendDotDiameter.js';

/** Options of {@link planSetup}. */
export interface PlanOptions {
  /** Displacement noise (standard uncertainty) of the correlation, px. Default 0.05 px (common practice). */
  readonly noisePx?: number;
  /** Fill fraction of the printed pattern assumed for the window advice, (0, 0.5]. Default 0.4. */
  readonly fill?: number;
  /** Target e⁻² dot image diameter, px. Default 2.5 (common practice: 2–3 px). */
  readonly targetDotPx?: number;
}

/** Overall verdict of a plan. */
export type PlanVerdict = 'good' | 'weak' | 'not measurable' | 'too strong' | 'blurred';

/** What the planned setup will see. Lengths in metres unless the name ends in Px. */
export interface SetupPlan {
  readonly noisePx: number;
  readonly model: string;
  readonly magnification: number;
  readonly lensToFlow: number;
  readonly apertureDiameter: number;
  /** Size of one pixel on the background, m. */
  readonly backgroundPixelSize: number;
  /** Field of view on the background [width, height], m. */
  readonly fieldOfViewBackground: readonly [number, number];
  /** Field of view in the flow mid-plane [width, height], m. */
  readonly fieldOfViewFlow: readonly [number, number];
  /** Size of one pixel in the flow mid-plane, m. */
  readonly flowPixelSize: number;
  readonly gladstoneDale: number;
  readonly n0: number;
  readonly medium: string;
  /** Δρ used, kg/m³ (from the temperature change when that was given). */
  readonly densityChange: number;
  readonly temperatureChange: number | null;
  readonly lengthScale: number;
  /** Span along the line of sight used for the deflection, m (axisymmetric: √π·L). */
  readonly effectiveSpan: number;
  /** Largest density gradient of the model, kg/m⁴. */
  readonly maxDensityGradient: number;
  /** Largest deflection, rad. */
  readonly maxDeflection: number;
  /** Largest displacement on the sensor, px. */
  readonly maxDisplacementPx: number;
  /** Largest spatial derivative of the displacement, px per px. */
  readonly maxDisplacementGradient: number;
  /** maxDisplacementPx / noisePx. */
  readonly signalToNoise: number;
  /** Deflection equal to the noise, rad. */
  readonly minDetectableDeflection: number;
  /** Density gradient (over the effective span) equal to the noise, kg/m⁴. */
  readonly minDetectableGradient: number;
  /** Defocus blur diameter of the flow in object space, m. */
  readonly flowBlur: number;
  /** Same, in flow-plane pixels. */
  readonly flowBlurPx: number;
  /** Diffraction-limited image diameter on the sensor, m (from memory, standard optics). */
  readonly diffractionBlur: number;
  readonly diffractionBlurPx: number;
  /** Recommended printed dot diameter, m (rounded to 0.05 mm). */
  readonly recommendedDotDiameter: number;
  /** e⁻² dot image diameter with that dot, px. */
  readonly dotImageDiameterPx: number;
  /** Disturbance size 2L in image pixels. */
  readonly disturbancePx: number;
  /** Recommended final interrogation window, px (≥ 10 dots; a power of two 16–128, as the correlator takes). */
  readonly windowPx: number;
  /** Recommended first-pass window, px (≥ 4 × max displacement). */
  readonly firstWindowPx: number;
  /** How many final windows span the disturbance (2L). */
  readonly windowsAcrossDisturbance: number;
  readonly verdict: PlanVerdict;
  /** The one change that would help most (or confirmation that none is needed). */
  readonly advice: string;
  /** Further warnings and notes, plain language. */
  readonly notes: readonly string[];
}

/** Window sides the correlator accepts (powers of two 16–128, measureDisplacement). */
const WINDOWS = [16, 32, 64, 128];

function pos(name: string, v: unknown): number {
  if (typeof v !== 'number' || !(v > 0) || !Number.isFinite(v)) throw invalidParameter(name, 'a positive number', v);
  return v;
}

/**
 * The flow-to-background distance giving `r` times the current `M·Z_D` with the camera and flow kept
 * in place (Z_A fixed): solves `x/(Z_A + x − f) = r·Z_D/(Z_B − f)`. NaN when no such distance exists.
 */
export function flowToBackgroundForGain(r: number, zb: number, zd: number, f: number): number {
  const za = zb - zd;
  const den = zb - f - r * zd;
  return den > 0 ? (r * zd * (za - f)) / den : NaN;
}

/**
 * Plan a BOS setup: magnification, fields of view, expected displacement, sensitivity limit, blur,
 * dot and window advice, a verdict and the one change that would help most.
 * @param setup camera (focalLength, fNumber, pixelPitch, sensorPx), geometry, medium, flow, expected.
 * @param opts noisePx (default 0.05 px), fill (default 0.4), targetDotPx (default 2.5 px).
 * @returns a {@link SetupPlan} (SI units).
 * @throws RhofieldError (usage) naming the setup field that is missing or out of range.
 */
export function planSetup(setup: PlanSetupInput, opts: PlanOptions = {}): SetupPlan {
  const noisePx = pos('noisePx', opts.noisePx ?? 0.05);
  const fill = opts.fill ?? 0.4;
  if (!(fill > 0 && fill <= 0.5)) throw invalidParameter('fill', 'a fraction in (0, 0.5]', fill);
  const targetDotPx = pos('targetDotPx', opts.targetDotPx ?? 2.5);
  const cam = setup.camera;
  const f = pos('camera.focalLength', cam.focalLength);
  const N = pos('camera.fNumber', cam.fNumber);
  const p = pos('camera.pixelPitch', cam.pixelPitch);
  const s = cam.sensorPx;
  if (!s || s.length !== 2) throw invalidParameter('camera.sensorPx', '[width, height] in pixels (the planner needs it)', s);
  const sw = pos('camera.sensorPx[0]', s[0]);
  const sh = pos('camera.sensorPx[1]', s[1]);
  const zb = pos('geometry.lensToBackground', setup.geometry.lensToBackground);
  const zd = pos('geometry.flowToBackground', setup.geometry.flowToBackground);
  if (zd >= zb) throw invalidParameter('geometry.flowToBackground', `less than lensToBackground (${zb} m)`, zd);
  const za = zb - zd;
  if (za <= f) throw invalidParameter('geometry', `lens-to-flow distance Z_B − Z_D above the focal length ${f} m`, za, 'move the camera back');
  const lambda = pos('medium.wavelength', setup.medium.wavelength);
  const rho0 = pos('medium.referenceDensity', setup.medium.referenceDensity);
  const exp = setup.expected;
  if (!exp) throw invalidParameter('expected', 'an object with densityChange or temperatureChange, and lengthScale', exp);
  const L = pos('expected.lengthScale', exp.lengthScale);
  const med = mediumConstants(setup.medium);
  const K = med.gladstoneDale;
  const n0 = med.n0;

  let drho: number;
  let dT: number | null = null;
  if (exp.densityChange !== undefined && exp.temperatureChange !== undefined) {
    throw invalidParameter('expected', 'exactly one of densityChange or temperatureChange', exp);
  } else if (exp.densityChange !== undefined) {
    drho = exp.densityChange;
    if (!Number.isFinite(drho) || drho === 0) throw invalidParameter('expected.densityChange', 'a non-zero number (kg/m³)', drho);
  } else if (exp.temperatureChange !== undefined) {
    dT = exp.temperatureChange;
    if (!Number.isFinite(dT) || dT === 0) throw invalidParameter('expected.temperatureChange', 'a non-zero number (K)', dT);
    const P = setup.medium.pressure;
    if (P === undefined) throw invalidParameter('medium.pressure', 'a pressure in Pa (needed to turn a temperature change into density)', P);
    if (med.gasConstant === null) throw invalidParameter('medium', 'a gas or mixture with a known gas constant (needed with temperatureChange)', 'gladstoneDale only', 'give densityChange instead');
    const T0 = P / (med.gasConstant * rho0);
    if (!(T0 + dT > 0)) throw invalidParameter('expected.temperatureChange', `more than −${T0.toFixed(1)} K (the reference temperature)`, dT);
    drho = rho0 * (T0 / (T0 + dT) - 1);
  } else {
    throw invalidParameter('expected', 'densityChange (kg/m³) or temperatureChange (K)', exp);
  }

  const M = f / (zb - f);
  const sFlow = (p * za * (zb - f)) / (f * zb);
  const sBg = p / M;
  const gradMax = (Math.SQRT2 * Math.abs(drho) * Math.exp(-0.5)) / L;
  let W: number;
  let model: string;
  if (setup.flow.type === 'planar') {
    W = pos('flow.span', setup.flow.span);
    model = `planar Gaussian Δρ·exp(−r²/L²), uniform over the span W = ${W} m; |∇ρ|max = √2·|Δρ|·e^(−1/2)/L`;
  } else {
    W = Math.sqrt(Math.PI) * L;
    model = 'axisymmetric Gaussian Δρ·exp(−r²/L²); line-of-sight integral gives an effective span √π·L';
  }
  const epsMax = (K * W * gradMax) / n0;
  const dMax = (M * zd * epsMax) / p;
  const Lpx = L / sFlow;
  // d(x) ∝ x·exp(−x²/L²): slope at the centre = dMax·√2·e^(1/2)/L.
  const slope = (dMax * Math.SQRT2 * Math.exp(0.5)) / Lpx;
  const epsMin = (noisePx * p) / (M * zd);
  const gradMin = (n0 * epsMin) / (K * W);
  const aperture = f / N;
  const blur = (aperture * zd) / zb;
  const blurPx = blur / sFlow;
  const diff = 2.44 * N * (1 + M) * lambda;
  const diffPx = diff / p;

  const dotAdvice = recommendDotDiameter({ focalLength: f, fNumber: N, pixelPitch: p, lensToBackground: zb, wavelength: lambda }, targetDotPx);
  const dot = dotAdvice.dotDiameter;
  const dotImgPx = dotAdvice.dotImagePx;
  // dots per px² with fill φ: φ / (π·(D_img/2)²) using the geometric image size M·D.
  const geoImgPx = (M * dot) / p;
  const perPx2 = fill / ((Math.PI * geoImgPx * geoImgPx) / 4);
  const needW = Math.sqrt(10 / perPx2);
  if (!Number.isFinite(needW)) throw notFinite('window needed for 10 dots', needW, `camera.fNumber, medium.wavelength, ${OPTICS}`);
  const windowPx = WINDOWS.find((w) => w >= Math.max(16, needW)) ?? 128;
  const firstWindowPx = WINDOWS.find((w) => w >= Math.max(windowPx, 4 * dMax)) ?? 128;
  const disturbancePx = 2 * Lpx;
  const across = disturbancePx / windowPx;

  const notes: string[] = [];
  const mm = (x: number): string => `${(x * 1e3).toFixed(x < 1e-3 ? 2 : 1)} mm`;
  if (diffPx > 3) notes.push(`diffraction alone gives ${diffPx.toFixed(1)} px dot images at f/${N}; open the aperture if dots look too large`);
  if (dotImgPx < 2) notes.push(`dot images ${dotImgPx.toFixed(1)} px: risk of peak locking`);
  if (across < 4) notes.push(`the disturbance (2L = ${disturbancePx.toFixed(0)} px) spans only ${across.toFixed(1)} windows of ${windowPx} px; its peak will be smoothed`);
  if (needW > 128) notes.push(`10 dots need ${needW.toFixed(0)} px windows, above the 128 px the correlator takes; print smaller dots or raise the fill`);
  if (4 * dMax > 128) notes.push(`peak displacement ${dMax.toFixed(1)} px exceeds a quarter of the largest (128 px) window; the first pass may lose it`);
  if (slope > 0.05) notes.push(`displacement gradient ${slope.toFixed(3)} px/px exceeds 0.05 (Keane & Adrian single-pass rule, from memory); use window deformation`);
  if (blur > L / 4) notes.push(`defocus blur in the flow ${mm(blur)} is more than L/4 = ${mm(L / 4)}; fine structure will be smoothed`);
  if (dT !== null) notes.push('density from temperature assumes constant pressure and composition (ideal gas); fuel or combustion products change K');

  let verdict: PlanVerdict;
  let advice: string;
  const snr = dMax / noisePx;
  const moveAdvice = (r: number, why: string): string => {
    const x = flowToBackgroundForGain(r, zb, zd, f);
    if (!Number.isFinite(x) || x <= 0) return '';
    const nb = (aperture * x) / (za + x);
    const dz = x - zd;
    const dir = dz >= 0 ? 'farther' : 'closer';
    return `move the background ${Math.abs(dz).toFixed(2)} m ${dir} (Z_D ${zd} → ${x.toFixed(2)} m) ${why}; blur in the flow becomes ${mm(nb)}`;
  };
  if (snr < 10) {
    verdict = snr < 3 ? 'not measurable' : 'weak';
    const gain = Math.max(2, Math.min(10, 10 / snr));
    const r = Math.pow(2, Math.ceil(Math.log2(gain)));
    // Prefer moving the background when that needs less than the current camera–background length;
    // otherwise a longer lens (signal ∝ M ≈ f/(Z_B − f) at fixed distances) is the smaller change.
    const x = flowToBackgroundForGain(r, zb, zd, f);
    const lens = `use a ${r}× longer lens (f ≈ ${(r * f * 1e3).toFixed(0)} mm) to multiply the signal by about ${r}; the field of view shrinks by the same factor and the blur in the flow grows to ${mm(r * blur)} at the same f-number`;
    advice = Number.isFinite(x) && x - zd <= zb ? moveAdvice(r, `to multiply the signal by ${r}`) : lens;
    if (Number.isFinite(x) && x - zd > zb) notes.push('alternative: ' + moveAdvice(r, `to multiply the signal by ${r}`));
  } else if (slope > 0.2) {
    verdict = 'too strong';
    const r = 0.05 / slope;
    advice = moveAdvice(r, `to bring the displacement gradient to 0.05 px/px`) || 'use a shorter lens to reduce the displacement gradient';
  } else if (blur > L / 2) {
    verdict = 'blurred';
    const Nn = (f * zd) / (zb * (L / 4));
    const dn = (2.44 * Nn * (1 + M) * lambda) / p;
    advice =
      dn < 3
        ? `stop down to f/${Nn.toFixed(0)} to bring the blur in the flow to L/4 = ${mm(L / 4)} (diffraction then ${dn.toFixed(1)} px; needs more light)`
        : moveAdvice(0.5, 'to halve the blur (and the signal)') || 'move the background closer to reduce the blur';
  } else {
    verdict = 'good';
    advice = `no change needed: peak displacement ${dMax.toFixed(2)} px is ${snr.toFixed(0)}× the ${noisePx} px noise`;
  }

  const plan: SetupPlan = {
    noisePx,
    model,
    magnification: M,
    lensToFlow: za,
    apertureDiameter: aperture,
    backgroundPixelSize: sBg,
    fieldOfViewBackground: [sw * sBg, sh * sBg],
    fieldOfViewFlow: [sw * sFlow, sh * sFlow],
    flowPixelSize: sFlow,
    gladstoneDale: K,
    n0,
    medium: med.description,
    densityChange: drho,
    temperatureChange: dT,
    lengthScale: L,
    effectiveSpan: W,
    maxDensityGradient: gradMax,
    maxDeflection: epsMax,
    maxDisplacementPx: dMax,
    maxDisplacementGradient: slope,
    signalToNoise: snr,
    minDetectableDeflection: epsMin,
    minDetectableGradient: gradMin,
    flowBlur: blur,
    flowBlurPx: blurPx,
    diffractionBlur: diff,
    diffractionBlurPx: diffPx,
    recommendedDotDiameter: dot,
    dotImageDiameterPx: dotImgPx,
    disturbancePx,
    windowPx,
    firstWindowPx,
    windowsAcrossDisturbance: across,
    verdict,
    advice,
    notes,
  };
  requireFinitePlan(plan);
  return plan;
}

const OPTICS = 'camera.focalLength, camera.pixelPitch, geometry.lensToBackground, geometry.flowToBackground';
const SIGNAL = `medium (gas or gladstoneDale), flow.span, expected.densityChange or temperatureChange, expected.lengthScale, ${OPTICS}`;
/** The setup keys each planned quantity is computed from (for the message when it is not finite). */
const PLAN_SOURCES: Readonly<Partial<Record<keyof SetupPlan, string>>> = {
  magnification: OPTICS,
  lensToFlow: OPTICS,
  backgroundPixelSize: OPTICS,
  fieldOfViewBackground: `camera.sensorPx, ${OPTICS}`,
  fieldOfViewFlow: `camera.sensorPx, ${OPTICS}`,
  flowPixelSize: OPTICS,
  apertureDiameter: 'camera.focalLength, camera.fNumber',
  flowBlur: `camera.fNumber, ${OPTICS}`,
  flowBlurPx: `camera.fNumber, ${OPTICS}`,
  diffractionBlur: 'camera.fNumber, medium.wavelength, camera.focalLength, geometry.lensToBackground',
  diffractionBlurPx: 'camera.fNumber, medium.wavelength, camera.pixelPitch',
  densityChange: 'expected.densityChange or expected.temperatureChange, medium.referenceDensity, medium.pressure',
  lengthScale: 'expected.lengthScale',
  effectiveSpan: 'flow.span, expected.lengthScale',
  maxDensityGradient: 'expected.densityChange or temperatureChange, expected.lengthScale',
  maxDeflection: SIGNAL,
  maxDisplacementPx: SIGNAL,
  maxDisplacementGradient: SIGNAL,
  signalToNoise: SIGNAL,
  minDetectableDeflection: OPTICS,
  minDetectableGradient: `medium (gas or gladstoneDale), flow.span, ${OPTICS}`,
  recommendedDotDiameter: `camera.fNumber, medium.wavelength, ${OPTICS}`,
  dotImageDiameterPx: `camera.fNumber, medium.wavelength, ${OPTICS}`,
  disturbancePx: `expected.lengthScale, ${OPTICS}`,
  windowsAcrossDisturbance: `expected.lengthScale, ${OPTICS}`,
};

function notFinite(what: string, value: string | number, keys: string): RhofieldError {
  return new RhofieldError('usage', `the planned ${what} is ${value}, not a finite number; check the setup keys it comes from (${keys}) and their units (SI: metres, kg/m³, K)`);
}

/** Every planned number must be finite: extreme inputs (1e300 m, 1e-300 m) overflow the formulas. */
function requireFinitePlan(plan: SetupPlan): void {
  for (const [k, keys] of Object.entries(PLAN_SOURCES)) {
    const v = plan[k as keyof SetupPlan] as unknown;
    const values = Array.isArray(v) ? (v as number[]) : typeof v === 'number' ? [v] : [];
    if (values.some((x) => !Number.isFinite(x))) throw notFinite(k, values.join(' × '), keys);
  }
}
