/**
 * Colour schlieren from a measured vector field: hue = direction of the vector, brightness =
 * magnitude (HSV with full saturation). The hue follows the HSV colour circle (Smith, "Color gamut
 * transform pairs", SIGGRAPH 1978): 0° red, 60° yellow, 120° green, 180° cyan, 240° blue, 300°
 * magenta, with the direction measured counter-clockwise from +x as seen in the image. The idea of
 * coding deflection direction by colour is the classic colour schlieren (Settles, "Schlieren and
 * Shadowgraph Techniques", Springer, 2001, ch. 4).
 */
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';
import type { RgbImage } from '../io/renderFieldFigure.js';
import { checkPair, type ColourView } from './types.js';

/**
 * HSV → RGB with S = 1: colour of direction `angle` (rad, counter-clockwise from +x as seen) at
 * relative magnitude `r` ∈ [0, 1] (brightness), written to `out[o..o+2]`.
 */
export function directionColour(angle: number, r: number, out: Uint8Array, o: number): void {
  let h = ((angle * 180) / Math.PI) % 360;
  if (h < 0) h += 360;
  const v = r >= 1 ? 1 : r > 0 ? r : 0;
  const hp = h / 60;
  const sector = Math.floor(hp) % 6;
  const f = hp - Math.floor(hp);
  const p = 0;
  const q = v * (1 - f);
  const t = v * f;
  const [R, G, B] =
    sector === 0 ? [v, t, p] : sector === 1 ? [q, v, p] : sector === 2 ? [p, v, t] : sector === 3 ? [p, q, v] : sector === 4 ? [t, p, v] : [v, p, q];
  out[o] = Math.round(255 * R);
  out[o + 1] = Math.round(255 * G);
  out[o + 2] = Math.round(255 * B);
}

/**
 * Colour schlieren picture of a vector field.
 * @param x x component (+x right); @param y y component (+y down, image frame).
 * @param options `unit` of the input; `maxMagnitude` shown at full brightness (default: the largest
 *   finite magnitude).
 * @returns an {@link RgbImage} (invalid = a NaN component) and the magnitude scale.
 */
export function colourSchlieren(x: Field, y: Field, options: { unit: string; maxMagnitude?: number }): ColourView {
  checkPair(x, y);
  const n = x.data.length;
  let max = options.maxMagnitude ?? 0;
  if (options.maxMagnitude === undefined) {
    for (let i = 0; i < n; i++) {
      const m = Math.hypot(x.data[i]!, y.data[i]!);
      if (Number.isFinite(m) && m > max) max = m;
    }
    if (max === 0) max = 1;
  }
  if (!(max > 0)) throw invalidParameter('maxMagnitude', 'a positive magnitude', options.maxMagnitude);
  const data = new Uint8Array(3 * n);
  const valid = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const u = x.data[i]!;
    const v = y.data[i]!;
    if (!Number.isFinite(u) || !Number.isFinite(v)) continue;
    valid[i] = 1;
    directionColour(Math.atan2(-v, u), Math.hypot(u, v) / max, data, 3 * i);
  }
  const image: RgbImage = { width: x.width, height: x.height, data, valid };
  return { kind: 'colour-schlieren', image, maxMagnitude: max, unit: options.unit };
}
