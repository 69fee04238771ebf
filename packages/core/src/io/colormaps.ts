/**
 * Colour maps for figures, as 256-entry RGB look-up tables built from d3-scale-chromatic:
 * - `sequential`: viridis (perceptually uniform; van der Walt & Smith, matplotlib, 2015) for
 *   magnitudes and density; `cividis` (Nuñez, Anderton & Renslow, PLOS ONE 13(7):e0199239, 2018)
 *   as an alternative readable with colour-vision deficiency;
 * - `diverging`: RdBu reversed so negative = blue, 0 = white, positive = red (Brewer, ColorBrewer),
 *   for signed quantities (deflection, differences);
 * - `cyclic`: sinebow (cyclic hue, Stoddard/Bostock) for directions;
 * - `grey`: black → white (knife-edge schlieren, shadowgraph).
 * Input t is clamped to [0, 1].
 */
import { interpolateCividis, interpolateRdBu, interpolateSinebow, interpolateViridis } from 'd3-scale-chromatic';

/** Colour-map kinds (chosen per quantity). */
export type ColormapKind = 'sequential' | 'diverging' | 'cyclic' | 'grey' | 'cividis';

/** Parse `#rrggbb` or `rgb(r, g, b)` (both forms come out of d3-scale-chromatic). */
export function parseCssColour(s: string): [number, number, number] {
  if (s.startsWith('#') && s.length === 7) {
    return [parseInt(s.slice(1, 3), 16), parseInt(s.slice(3, 5), 16), parseInt(s.slice(5, 7), 16)];
  }
  const m = /rgb\(\s*(\d+),\s*(\d+),\s*(\d+)\s*\)/.exec(s);
  if (!m) throw new Error(`unparsable colour ${s}`);
  return [Number(m[1]), Number(m[2]), Number(m[3])];
}

const cache = new Map<ColormapKind, Uint8Array>();

/**
 * 256 × RGB look-up table of a colour map (entry k is the colour at t = k / 255).
 * @param kind colour-map kind.
 */
export function colormapLut(kind: ColormapKind): Uint8Array {
  const hit = cache.get(kind);
  if (hit) return hit;
  const f: (t: number) => string =
    kind === 'sequential'
      ? interpolateViridis
      : kind === 'cividis'
        ? interpolateCividis
        : kind === 'diverging'
          ? (t) => interpolateRdBu(1 - t)
          : kind === 'cyclic'
            ? interpolateSinebow
            : (t) => {
                const g = Math.round(255 * t);
                return `rgb(${g}, ${g}, ${g})`;
              };
  const lut = new Uint8Array(256 * 3);
  for (let k = 0; k < 256; k++) lut.set(parseCssColour(f(k / 255)), 3 * k);
  cache.set(kind, lut);
  return lut;
}

/** Colour of t ∈ [0, 1] (clamped) under a look-up table, as RGB bytes. */
export function lutColour(lut: Uint8Array, t: number): [number, number, number] {
  const k = t >= 1 ? 255 : t > 0 ? Math.round(t * 255) : 0;
  return [lut[3 * k]!, lut[3 * k + 1]!, lut[3 * k + 2]!];
}
