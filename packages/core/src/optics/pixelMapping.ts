/**
 * Image pixels ↔ metres in the flow plane.
 *
 * Frame: x_m to the right, y_m UP (physical), origin at `originPx` (default the image centre
 * ((W−1)/2, (H−1)/2), pixel centres at integer coordinates). One pixel spans
 * {@link flowPlanePixelSize} metres in the flow plane.
 */
import { flowPlanePixelSize, type OpticalGeometry } from './geometry.js';

/** A pixel ↔ metre mapping for one image size. */
export interface PixelMapping {
  /** Flow-plane size of one pixel, m. */
  readonly pixelSizeM: number;
  /** Origin of the metre coordinates, image pixels [x, y]. */
  readonly originPx: readonly [number, number];
  /** x (px) → x_m (m, right). */
  xM(xPx: number): number;
  /** y (px, down) → y_m (m, up). */
  yM(yPx: number): number;
  /** x_m → x (px). */
  xPx(xM: number): number;
  /** y_m (up) → y (px, down). */
  yPx(yM: number): number;
}

/**
 * Build the pixel ↔ metre mapping for an image.
 * @param g optical geometry (lengths in m).
 * @param imageWidth image width, px.
 * @param imageHeight image height, px.
 * @param originPx optional origin [x, y] in px; default the image centre.
 */
export function pixelMapping(
  g: OpticalGeometry,
  imageWidth: number,
  imageHeight: number,
  originPx?: readonly [number, number],
): PixelMapping {
  const s = flowPlanePixelSize(g);
  const ox = originPx ? originPx[0] : (imageWidth - 1) / 2;
  const oy = originPx ? originPx[1] : (imageHeight - 1) / 2;
  return {
    pixelSizeM: s,
    originPx: [ox, oy],
    xM: (x) => (x - ox) * s,
    yM: (y) => -(y - oy) * s,
    xPx: (xm) => ox + xm / s,
    yPx: (ym) => oy - ym / s,
  };
}
