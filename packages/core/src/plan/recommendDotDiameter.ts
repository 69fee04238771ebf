/**
 * Printed dot diameter for a target dot image size on the sensor.
 *
 * The e⁻² dot image diameter is taken as `d_τ = √((M·D)² + d_diff²)` (geometric image and diffraction
 * spot added in quadrature, common practice in particle imaging; from memory), with
 * `M = f/(Z_B − f)` (thin lens) and `d_diff = 2.44·N·(1 + M)·λ` (Airy diameter at the image distance;
 * from memory, standard optics). A printed disc of diameter D is treated as a dot of e⁻² diameter D
 * (an approximation: the disc's edge, not a Gaussian's, sets its size). Target 2.5 px: common practice
 * is 2–3 px (common practice).
 */
import { invalidParameter } from '../util/errors.js';

/** Inputs of {@link recommendDotDiameter}, SI units. */
export interface DotSizeInput {
  readonly focalLength: number;
  readonly fNumber: number;
  readonly pixelPitch: number;
  readonly lensToBackground: number;
  readonly wavelength: number;
}

/** Result: the printed dot and the dot image it gives. */
export interface DotSizeAdvice {
  /** Printed dot diameter, m, rounded to `step` (≥ one step). */
  readonly dotDiameter: number;
  /** e⁻² dot image diameter with that dot, px. */
  readonly dotImagePx: number;
  /** Diffraction spot diameter, px. */
  readonly diffractionPx: number;
  readonly magnification: number;
}

/**
 * Printed dot diameter giving a dot image of about `targetPx` px (e⁻²) on the sensor.
 * @param c camera and distance (m), f-number, wavelength (m).
 * @param targetPx target e⁻² dot image diameter, px; default 2.5.
 * @param step rounding step of the printed diameter, m; default 0.05 mm.
 * @throws RhofieldError (usage) for non-positive inputs.
 */
export function recommendDotDiameter(c: DotSizeInput, targetPx = 2.5, step = 0.05e-3): DotSizeAdvice {
  for (const [k, v] of Object.entries(c)) {
    if (typeof v !== 'number' || !(v > 0) || !Number.isFinite(v)) throw invalidParameter(k, 'a positive number', v);
  }
  if (!(c.lensToBackground > c.focalLength)) throw invalidParameter('lensToBackground', `more than the focal length ${c.focalLength} m`, c.lensToBackground);
  const M = c.focalLength / (c.lensToBackground - c.focalLength);
  const diff = 2.44 * c.fNumber * (1 + M) * c.wavelength;
  const target = targetPx * c.pixelPitch;
  const geo = target > diff ? Math.sqrt(target * target - diff * diff) / M : 0;
  const dot = Math.max(step, Math.round(geo / step) * step);
  return {
    dotDiameter: dot,
    dotImagePx: Math.sqrt((M * dot) ** 2 + diff * diff) / c.pixelPitch,
    diffractionPx: diff / c.pixelPitch,
    magnification: M,
  };
}
