/**
 * Views: the classic optical pictures computed from a measured vector field.
 *
 * Input convention (stated once, here): a vector field is two {@link Field}s on one grid, the
 * components in the image frame (+x right, +y down), e.g. the deflection angle in rad or the
 * displacement in px. Angles of views are measured counter-clockwise from +x **as seen in the
 * image** (90° = pointing up = −y_image), the usual way to read a picture.
 */
import type { ColormapKind } from '../io/colormaps.js';
import type { ContourLevel, RgbImage } from '../io/renderFieldFigure.js';
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';

/** A scalar view with its display scale. */
export interface ScalarView {
  readonly kind: 'knife-edge' | 'shadowgraph' | 'contours';
  /** The computed quantity on the grid (NaN where there is no data). */
  readonly field: Field;
  /** Display range [low, high] (knife-edge/shadowgraph: symmetric about 0). */
  readonly range: readonly [number, number];
  readonly colormap: ColormapKind;
  /** Colour-bar quantity label, e.g. "knife-edge signal, 0° (ε·x̂)". */
  readonly quantity: string;
  /** Unit of `field`. */
  readonly unit: string;
  /** Contour lines (contour view only). */
  readonly contours?: readonly ContourLevel[];
}

/** A colour view (colour schlieren). */
export interface ColourView {
  readonly kind: 'colour-schlieren';
  readonly image: RgbImage;
  /** Magnitude shown at full brightness, in the input unit. */
  readonly maxMagnitude: number;
  readonly unit: string;
}

/** Check that two components share one grid. */
export function checkPair(x: Field, y: Field): void {
  if (x.width !== y.width || x.height !== y.height || x.data.length !== x.width * x.height || y.data.length !== x.data.length) {
    throw invalidParameter('vector y component', `a field of ${x.width}×${x.height} (the x component)`, `${y.width}×${y.height}`);
  }
}
