/**
 * Thin-lens BOS geometry (docs/conventions.md). All lengths in metres.
 *
 * Sign and frame rules, stated once for the whole library:
 * - Displacement `d` (px) is measured image minus reference, +x right, +y down (image rows).
 * - Deflection `eps` (rad) is `(1/n0)·∫∇n dz` along the line of sight, positive toward higher n,
 *   expressed in the same image frame (+x right, +y down).
 * - They are related by `d·p = −M·Z_D·eps` (physical minus sign: rays bend toward higher n, so the
 *   background seen through the flow appears shifted toward lower n).
 * - Physical outputs use x_m right, y_m UP; the y component changes sign once, at the output.
 *
 * References: Richard & Raffel 2001, Meas. Sci. Technol. 12:1576; Raffel 2015, Exp. Fluids 56:60.
 */

/** The lengths the geometry needs, metres. */
export interface OpticalGeometry {
  /** Focal length f, m. */
  readonly focalLength: number;
  /** Pixel pitch p, m. */
  readonly pixelPitch: number;
  /** Lens → background distance Z_B, m. */
  readonly lensToBackground: number;
  /** Flow mid-plane → background distance Z_D, m. */
  readonly flowToBackground: number;
}

/**
 * Background magnification `M = f / (Z_B − f)` (thin lens focused on the background).
 * @returns M (dimensionless).
 */
export function magnification(g: OpticalGeometry): number {
  return g.focalLength / (g.lensToBackground - g.focalLength);
}

/**
 * Size of one image pixel in the flow (mid-)plane, `p · Z_A · (Z_B − f) / (f · Z_B)` with
 * `Z_A = Z_B − Z_D`: the camera is focused on the background (image distance `v = f·Z_B/(Z_B − f)`),
 * so the flow plane is imaged with magnification `v / Z_A`.
 * @returns metres per pixel in the flow plane.
 */
export function flowPlanePixelSize(g: OpticalGeometry): number {
  const za = g.lensToBackground - g.flowToBackground;
  return (g.pixelPitch * za * (g.lensToBackground - g.focalLength)) / (g.focalLength * g.lensToBackground);
}

/**
 * Radians of deflection per pixel of displacement: `eps = k · d` with `k = −p / (M · Z_D)`.
 * The factor is negative (see the module comment).
 */
export function deflectionPerPixel(g: OpticalGeometry): number {
  return -g.pixelPitch / (magnification(g) * g.flowToBackground);
}

/**
 * Displacement (px, one component, image frame) → deflection angle (rad, same component and frame):
 * `eps = −d · p / (M · Z_D)`.
 */
export function displacementToDeflection(dPx: number, g: OpticalGeometry): number {
  return dPx * deflectionPerPixel(g);
}

/**
 * Deflection angle (rad, image frame) → apparent displacement (px, image frame):
 * `d = −M · Z_D · eps / p`.
 */
export function deflectionToDisplacement(eps: number, g: OpticalGeometry): number {
  return eps / deflectionPerPixel(g);
}
