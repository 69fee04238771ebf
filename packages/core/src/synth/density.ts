/**
 * Synthetic deflection through known density fields (sign and geometry: docs/conventions.md): scenes with an exact density
 * field and the deflection of the line of sight through it, with the physical sign, and the apparent
 * displacement of the background they cause for a given setup, for the dot renderer.
 *
 * Frames: scene geometry is in flow-plane metres, x_m right, y_m UP, origin at the setup's originPx
 * or the image centre (optics/pixelMapping.ts). Deflections are returned in the IMAGE frame
 * (+x right, +y down) like displacements: eps = (1/n0)∫∇n dz, positive toward higher n, and
 * d = −M·Z_D·eps/p (optics/geometry.ts).
 */
import { deflectionPerPixel } from '../optics/geometry.js';
import { mediumConstants } from '../optics/medium.js';
import { pixelMapping, type PixelMapping } from '../optics/pixelMapping.js';
import type { Setup } from '../setup/schema.js';
import type { VectorGrid } from '../correlate/types.js';
import { invalidParameter } from '../util/errors.js';
import type { Field, MaskField } from '../util/field.js';

/** A known density field and its line-of-sight deflection. */
export interface DensityScene {
  readonly kind: 'planar' | 'axisymmetric';
  /** Local density at (x_m, y_m) in the flow (mid-)plane, kg/m³; NaN inside a solid body. */
  density(xM: number, yM: number): number;
  /** Deflection (rad) of the ray seen at (x_m, y_m), image frame [along +x, along +y DOWN]; NaN in a body. */
  deflection(xM: number, yM: number): [number, number];
  /** True where a solid body hides the background. */
  hidden(xM: number, yM: number): boolean;
}

function geometry(setup: Setup) {
  return {
    focalLength: setup.camera.focalLength,
    pixelPitch: setup.camera.pixelPitch,
    lensToBackground: setup.geometry.lensToBackground,
    flowToBackground: setup.geometry.flowToBackground,
  };
}

function spanOf(setup: Setup, span: number | undefined): number {
  const w = span ?? (setup.flow.type === 'planar' ? setup.flow.span : NaN);
  if (!(w > 0)) throw invalidParameter('spanM', 'a positive span in metres (or a planar setup.flow.span)', span);
  return w;
}

/** Options of {@link planarGaussianScene}. */
export interface PlanarGaussianOptions {
  /** Peak density change Δρ, kg/m³ (negative for a hot spot). */
  readonly amplitude: number;
  /** Gaussian standard deviation σ, m: Δρ·exp(−r²/(2σ²)). */
  readonly sigmaM: number;
  /** Centre (x_m, y_m), m. Default [0, 0]. */
  readonly centerM?: readonly [number, number];
  /** Span W along the line of sight, m. Default setup.flow.span. */
  readonly spanM?: number;
}

/**
 * A 2-D Gaussian density change, uniform over the span W along the line of sight:
 * ρ = ρ_ref + Δρ·exp(−r²/(2σ²)); eps = (K·W/n0)·∇ρ (exact for a disturbance uniform in depth).
 */
export function planarGaussianScene(setup: Setup, o: PlanarGaussianOptions): DensityScene {
  const { gladstoneDale: K, n0 } = mediumConstants(setup.medium);
  const W = spanOf(setup, o.spanM);
  const rho0 = setup.medium.referenceDensity;
  const [cx, cy] = o.centerM ?? [0, 0];
  const s2 = o.sigmaM * o.sigmaM;
  const c = (K * W) / n0;
  return {
    kind: 'planar',
    density: (x, y) => rho0 + o.amplitude * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / (2 * s2)),
    deflection: (x, y) => {
      const g = o.amplitude * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / (2 * s2));
      const gx = (-(x - cx) / s2) * g;
      const gyUp = (-(y - cy) / s2) * g;
      return [c * gx, -c * gyUp];
    },
    hidden: () => false,
  };
}

/** Options of {@link axisymmetricGaussianScene}. */
export interface AxisymmetricGaussianOptions {
  /** Density change on the axis Δρ, kg/m³. */
  readonly amplitude: number;
  /** Radius parameter σ, m: Δρ·exp(−r²/σ²) (the form of the standard Gaussian deflection-form Abel pair). */
  readonly sigmaM: number;
  /** Axis direction. Default 'vertical'. */
  readonly axis?: 'vertical' | 'horizontal';
  /** Axis position: x_m of a vertical axis or y_m of a horizontal one, m. Default 0. */
  readonly axisM?: number;
}

/**
 * An axisymmetric Gaussian, uniform along its axis: n − n∞ = K·Δρ·exp(−r²/σ²). Deflection from the
 * Abel-pair in deflection form: ε(y) = −(2√π·KΔρ/n∞)(y/σ)·exp(−y²/σ²), y the signed lateral
 * distance from the axis (positive to +x for a vertical axis, to +y_m for a horizontal one).
 */
export function axisymmetricGaussianScene(setup: Setup, o: AxisymmetricGaussianOptions): DensityScene {
  const { gladstoneDale: K, n0 } = mediumConstants(setup.medium);
  const rho0 = setup.medium.referenceDensity;
  const a = o.axisM ?? 0;
  const vertical = (o.axis ?? 'vertical') === 'vertical';
  const s = o.sigmaM;
  const eps = (y: number) => (-(2 * Math.sqrt(Math.PI) * K * o.amplitude) / n0) * (y / s) * Math.exp(-(y * y) / (s * s));
  return {
    kind: 'axisymmetric',
    density: (x, y) => {
      const r = vertical ? x - a : y - a;
      return rho0 + o.amplitude * Math.exp(-(r * r) / (s * s));
    },
    deflection: (x, y) => (vertical ? [eps(x - a), 0] : [0, -eps(y - a)]),
    hidden: () => false,
  };
}

/**
 * Oblique-shock angle β from the θ-β-M relation
 * tan θ = 2 cot β (M² sin²β − 1) / (M²(γ + cos 2β) + 2), solved by bisection.
 * @param mach upstream Mach number M > 1. @param thetaRad flow deflection θ, rad.
 * @param gamma ratio of specific heats (default 1.4). @param branch 'weak' (default) or 'strong'.
 * @returns β, rad. @throws RhofieldError when θ exceeds the detachment angle for this M.
 * @see NACA Report 1135 (Ames Research Staff, 1953), Equations, tables, and charts for compressible flow.
 */
export function obliqueShockAngle(mach: number, thetaRad: number, gamma = 1.4, branch: 'weak' | 'strong' = 'weak'): number {
  if (!(mach > 1)) throw invalidParameter('mach', 'a Mach number > 1', mach);
  const th = (b: number) => Math.atan((2 / Math.tan(b)) * ((mach * mach * Math.sin(b) ** 2 - 1) / (mach * mach * (gamma + Math.cos(2 * b)) + 2)));
  const mu = Math.asin(1 / mach);
  // maximum deflection by golden-section search on (μ, π/2)
  let lo = mu;
  let hi = Math.PI / 2;
  const g = (Math.sqrt(5) - 1) / 2;
  for (let i = 0; i < 200; i++) {
    const m1 = hi - g * (hi - lo);
    const m2 = lo + g * (hi - lo);
    if (th(m1) < th(m2)) lo = m1;
    else hi = m2;
  }
  const bMax = 0.5 * (lo + hi);
  if (!(thetaRad >= 0 && thetaRad <= th(bMax))) {
    throw invalidParameter('theta', `a deflection between 0 and the detachment angle ${((th(bMax) * 180) / Math.PI).toFixed(3)}° for M = ${mach}`, `${(thetaRad * 180) / Math.PI}°`);
  }
  let a = branch === 'weak' ? mu : bMax;
  let b = branch === 'weak' ? bMax : Math.PI / 2;
  const rising = branch === 'weak';
  for (let i = 0; i < 200; i++) {
    const m = 0.5 * (a + b);
    if ((th(m) < thetaRad) === rising) a = m;
    else b = m;
  }
  return 0.5 * (a + b);
}

/** Density ratio across an oblique shock, ρ₂/ρ₁ = (γ+1)Mn²/((γ−1)Mn² + 2), Mn = M sin β (NACA 1135). */
export function obliqueShockDensityRatio(mach: number, thetaRad: number, gamma = 1.4, branch: 'weak' | 'strong' = 'weak'): number {
  const mn2 = (mach * Math.sin(obliqueShockAngle(mach, thetaRad, gamma, branch))) ** 2;
  return ((gamma + 1) * mn2) / ((gamma - 1) * mn2 + 2);
}

/** Options of {@link obliqueShockScene}. */
export interface ObliqueShockOptions {
  /** Upstream Mach number. Default 2. */
  readonly mach?: number;
  /** Wedge half-angle = flow deflection θ, degrees. Default 10. */
  readonly wedgeHalfAngleDeg?: number;
  /** Ratio of specific heats. Default 1.4. */
  readonly gamma?: number;
  /** Wedge apex (x_m, y_m), m; the wedge points left, flow runs to +x. Default [0, 0]. */
  readonly apexM?: readonly [number, number];
  /** σ of the Gaussian smoothing across the shock, image px (defocus blur). Default 8. */
  readonly smoothingPx?: number;
  /** Span W along the line of sight, m. Default setup.flow.span. */
  readonly spanM?: number;
}

/**
 * Planar flow over a symmetric wedge (two attached weak oblique shocks from the apex): ρ₁ =
 * referenceDensity upstream, ρ₂ = ρ₁·(ρ₂/ρ₁) between each shock and the wedge; the step is smoothed
 * by a Gaussian of σ = smoothingPx across the shock line (erf profile), as the defocus blur of a
 * background-focused camera would. The wedge body hides the background (NaN deflection,
 * `hidden` true). Returns also the shock angle and density ratio.
 */
export function obliqueShockScene(setup: Setup, o: ObliqueShockOptions = {}): DensityScene & { readonly shockAngleRad: number; readonly densityRatio: number } {
  const mach = o.mach ?? 2;
  const theta = ((o.wedgeHalfAngleDeg ?? 10) * Math.PI) / 180;
  const gamma = o.gamma ?? 1.4;
  const beta = obliqueShockAngle(mach, theta, gamma);
  const ratio = obliqueShockDensityRatio(mach, theta, gamma);
  const { gladstoneDale: K, n0 } = mediumConstants(setup.medium);
  const W = spanOf(setup, o.spanM);
  const rho1 = setup.medium.referenceDensity;
  const dr = rho1 * (ratio - 1);
  const [ax, ay] = o.apexM ?? [0, 0];
  const px = pixelMapping(geometry(setup), 2, 2).pixelSizeM;
  const sig = (o.smoothingPx ?? 8) * px;
  const sb = Math.sin(beta);
  const cb = Math.cos(beta);
  const tt = Math.tan(theta);
  const hidden = (x: number, y: number) => x > ax && Math.abs(y - ay) < (x - ax) * tt;
  const c = (K * W) / n0;
  // signed distance to the shock of this half, positive downstream
  const dist = (x: number, y: number) => (x - ax) * sb - Math.abs(y - ay) * cb;
  const erf = (z: number) => {
    // complementary error function by the Chebyshev-fitted approximation of Press et al.,
    // Numerical Recipes (2nd ed., 1992, §6.2, erfcc), fractional error < 1.2e-7
    const t = 1 / (1 + 0.5 * Math.abs(z));
    const r = t * Math.exp(-z * z - 1.26551223 + t * (1.00002368 + t * (0.37409196 + t * (0.09678418 + t * (-0.18628806 + t * (0.27886807 + t * (-1.13520398 + t * (1.48851587 + t * (-0.82215223 + t * 0.17087277)))))))));
    return z >= 0 ? 1 - r : r - 1;
  };
  return {
    kind: 'planar',
    shockAngleRad: beta,
    densityRatio: ratio,
    density: (x, y) => (hidden(x, y) ? NaN : rho1 + dr * 0.5 * (1 + erf(dist(x, y) / (Math.SQRT2 * sig)))),
    deflection: (x, y) => {
      if (hidden(x, y)) return [NaN, NaN];
      const d = dist(x, y);
      const g = (dr * Math.exp(-(d * d) / (2 * sig * sig))) / (Math.sqrt(2 * Math.PI) * sig);
      const gx = g * sb;
      const gyUp = -g * cb * (y >= ay ? 1 : -1);
      return [c * gx, -c * gyUp];
    },
    hidden,
  };
}

/**
 * The apparent background displacement a scene causes, px, image frame, at image point (x, y) px:
 * d = −M·Z_D·eps/p. NaN where a body hides the background.
 * @returns a callback `(xPx, yPx) => [dxPx, dyPx]` for the dot renderer.
 */
export function sceneDisplacement(scene: DensityScene, setup: Setup, imageWidth: number, imageHeight: number): (xPx: number, yPx: number) => [number, number] {
  const map = pixelMapping(geometry(setup), imageWidth, imageHeight, setup.geometry.originPx);
  const k = 1 / deflectionPerPixel(geometry(setup));
  return (x, y) => {
    const [ex, ey] = scene.deflection(map.xM(x), map.yM(y));
    return [ex * k, ey * k];
  };
}

/** Visibility mask of the background, image size: 1 = background visible, 0 = hidden by a body. */
export function sceneBackgroundMask(scene: DensityScene, setup: Setup, imageWidth: number, imageHeight: number): MaskField {
  const map: PixelMapping = pixelMapping(geometry(setup), imageWidth, imageHeight, setup.geometry.originPx);
  const data = new Uint8Array(imageWidth * imageHeight);
  for (let y = 0; y < imageHeight; y++) for (let x = 0; x < imageWidth; x++) data[x + y * imageWidth] = scene.hidden(map.xM(x), map.yM(y)) ? 0 : 1;
  return { width: imageWidth, height: imageHeight, data };
}

/** The true density of a scene at the vector-grid points (window centres), kg/m³; NaN in a body. */
export function sceneDensityOnGrid(scene: DensityScene, setup: Setup, grid: VectorGrid): Field {
  const map = pixelMapping(geometry(setup), grid.imageWidth, grid.imageHeight, setup.geometry.originPx);
  const data = new Float32Array(grid.cols * grid.rows);
  for (let r = 0; r < grid.rows; r++) for (let c = 0; c < grid.cols; c++) data[c + r * grid.cols] = scene.density(map.xM(grid.xPx[c]!), map.yM(grid.yPx[r]!));
  return { width: grid.cols, height: grid.rows, data };
}

/** The exact deflection-derived displacement of a scene on a vector grid (px), e.g. to test reconstruction without images. */
export function sceneDisplacementOnGrid(scene: DensityScene, setup: Setup, grid: VectorGrid): { dxPx: Field; dyPx: Field } {
  const f = sceneDisplacement(scene, setup, grid.imageWidth, grid.imageHeight);
  const dx = new Float32Array(grid.cols * grid.rows);
  const dy = new Float32Array(grid.cols * grid.rows);
  for (let r = 0; r < grid.rows; r++) for (let c = 0; c < grid.cols; c++) {
    const [a, b] = f(grid.xPx[c]!, grid.yPx[r]!);
    dx[c + r * grid.cols] = a;
    dy[c + r * grid.cols] = b;
  }
  return { dxPx: { width: grid.cols, height: grid.rows, data: dx }, dyPx: { width: grid.cols, height: grid.rows, data: dy } };
}
