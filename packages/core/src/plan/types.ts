/**
 * The part of a setup (docs/setup.md) the planner reads. Structurally the same as the parsed setup file,
 * so a parsed setup can be passed as is; a plain typed object works too. SI units throughout.
 */
import type { MediumSpec } from '../optics/medium.js';

/** Camera: thin lens focused on the background. */
export interface PlanCamera {
  /** Focal length f, m. */
  readonly focalLength: number;
  /** f-number N (aperture diameter f/N). Needed by the planner. */
  readonly fNumber?: number | undefined;
  /** Pixel pitch p, m. */
  readonly pixelPitch: number;
  /** Sensor size [width, height], px. Needed by the planner. */
  readonly sensorPx?: readonly [number, number] | readonly number[] | undefined;
}

/** Distances, m. */
export interface PlanGeometry {
  /** Lens → background, Z_B, m. */
  readonly lensToBackground: number;
  /** Flow mid-plane → background, Z_D, m. */
  readonly flowToBackground: number;
  readonly originPx?: readonly number[] | undefined;
}

/** Flow description: planar with a span along the line of sight, or axisymmetric. */
export type PlanFlow =
  | { readonly type: 'planar'; readonly span: number; readonly reference?: unknown }
  | { readonly type: 'axisymmetric'; readonly axis?: unknown; readonly axisPosition?: unknown };

/** Expected disturbance: a density change or (isobaric) a temperature change, and its length scale. */
export interface PlanExpected {
  /** Peak density difference Δρ, kg/m³ (signed). */
  readonly densityChange?: number | undefined;
  /** Peak temperature difference ΔT, K (isobaric; needs medium.pressure and a gas with known R). */
  readonly temperatureChange?: number | undefined;
  /** Gaussian length scale L, m: Δρ·exp(−r²/L²). */
  readonly lengthScale: number;
}

/** Everything {@link planSetup} needs. */
export interface PlanSetupInput {
  readonly camera: PlanCamera;
  readonly geometry: PlanGeometry;
  readonly medium: MediumSpec;
  readonly flow: PlanFlow;
  readonly expected?: PlanExpected | undefined;
}
