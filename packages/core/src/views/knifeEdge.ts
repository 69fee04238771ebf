/**
 * Knife-edge schlieren from a measured vector field: the deflection component along the direction
 * of sensitivity. A knife edge cuts off rays deflected across it, so the picture's brightness
 * follows the deflection component normal to the edge: 0° = sensitive to horizontal deflection
 * (a vertical knife edge), 90° = sensitive to upward deflection (a horizontal edge).
 * Standard schlieren optics (e.g. Settles, "Schlieren and Shadowgraph Techniques", Springer, 2001,
 * ch. 3).
 */
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';
import { checkPair, type ScalarView } from './types.js';

/**
 * Component of the vector field along the direction at `angleDeg` (counter-clockwise from +x as
 * seen in the image): `s = εx·cos θ − εy·sin θ` with εy the image-frame (down) component.
 * @param x x component (+x right); @param y y component (+y down, image frame); same grid.
 * @param angleDeg direction of sensitivity, degrees.
 * @returns the signed component, same unit as the input, NaN where a component is NaN.
 */
export function knifeEdge(x: Field, y: Field, angleDeg: number): Field {
  if (!Number.isFinite(angleDeg)) throw invalidParameter('angle', 'a finite angle in degrees', angleDeg);
  checkPair(x, y);
  const t = (angleDeg * Math.PI) / 180;
  const c = Math.cos(t);
  const s = Math.sin(t);
  // exact axes: avoid 6e-17 leakage of the other component at 90°, 180°, 270°
  const cr = Math.abs(c) < 1e-12 ? 0 : c;
  const sr = Math.abs(s) < 1e-12 ? 0 : s;
  const out = new Float32Array(x.data.length);
  for (let i = 0; i < out.length; i++) out[i] = cr * x.data[i]! - sr * y.data[i]!;
  return { width: x.width, height: x.height, data: out };
}

/** Largest |value| among finite values (0 if none). */
export function maxAbs(f: Field): number {
  let m = 0;
  for (const v of f.data) if (Number.isFinite(v) && Math.abs(v) > m) m = Math.abs(v);
  return m;
}

/**
 * Knife-edge view: the component plus a symmetric grey scale (mid-grey = no deflection, like an
 * undisturbed schlieren picture with the edge cutting half the light source image).
 * @param options `angleDeg` (default 0), `unit` of the input (e.g. 'rad'), `range` = half-width of
 *   the grey scale (default: the largest |component|; a smaller value saturates like a sharper cut).
 */
export function knifeEdgeView(x: Field, y: Field, options: { angleDeg?: number; unit: string; range?: number }): ScalarView {
  const angle = options.angleDeg ?? 0;
  const field = knifeEdge(x, y, angle);
  const r = options.range ?? (maxAbs(field) || 1);
  if (!(r > 0)) throw invalidParameter('range', 'a positive half-width', options.range);
  return { kind: 'knife-edge', field, range: [-r, r], colormap: 'grey', quantity: `knife-edge signal at ${angle}°`, unit: options.unit };
}
