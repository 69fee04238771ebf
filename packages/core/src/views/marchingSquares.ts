/**
 * Contour lines of a scalar field by marching squares: the two-dimensional form of the cell-by-cell
 * case-table idea of Lorensen & Cline, "Marching cubes: a high resolution 3D surface construction
 * algorithm", Computer Graphics (SIGGRAPH '87) 21(4):163–169, 1987. Each cell of four neighbouring
 * grid values is classified by which corners lie at or above the level; crossing points are placed
 * on the cell edges by linear interpolation; the two ambiguous (saddle) cases are resolved by the
 * mean of the four corners. Cells with a NaN corner are skipped.
 */
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';
import type { ContourLevel } from '../io/renderFieldFigure.js';
import { niceTicks } from '../io/niceTicks.js';
import type { ScalarView } from './types.js';

// edges: 0 top (tl–tr), 1 right (tr–br), 2 bottom (bl–br), 3 left (tl–bl)
const CASES: readonly (readonly number[])[] = [
  [], [3, 2], [2, 1], [3, 1], [0, 1], [], [0, 2], [3, 0],
  [3, 0], [0, 2], [], [0, 1], [3, 1], [2, 1], [3, 2], [],
];

/**
 * Contour segments of one or more levels.
 * @param field scalar field (NaN = no data).
 * @param levels contour values.
 * @returns one {@link ContourLevel} per level, segments in grid-index coordinates (x = column,
 *   y = row; grid points at integers).
 */
export function contourLines(field: Field, levels: readonly number[]): ContourLevel[] {
  const { width: W, height: H, data } = field;
  if (data.length !== W * H) throw invalidParameter('field', `${W * H} values`, data.length);
  return levels.map((level) => {
    if (!Number.isFinite(level)) throw invalidParameter('contour level', 'a finite value', level);
    const seg: number[] = [];
    const point = (c: number, r: number, edge: number, tl: number, tr: number, br: number, bl: number): [number, number] => {
      const t = (a: number, b: number) => (level - a) / (b - a);
      switch (edge) {
        case 0: return [c + t(tl, tr), r];
        case 1: return [c + 1, r + t(tr, br)];
        case 2: return [c + t(bl, br), r + 1];
        default: return [c, r + t(tl, bl)];
      }
    };
    for (let r = 0; r + 1 < H; r++) {
      for (let c = 0; c + 1 < W; c++) {
        const tl = data[c + r * W]!;
        const tr = data[c + 1 + r * W]!;
        const bl = data[c + (r + 1) * W]!;
        const br = data[c + 1 + (r + 1) * W]!;
        if (!(Number.isFinite(tl) && Number.isFinite(tr) && Number.isFinite(bl) && Number.isFinite(br))) continue;
        const idx = (tl >= level ? 8 : 0) | (tr >= level ? 4 : 0) | (br >= level ? 2 : 0) | (bl >= level ? 1 : 0);
        let pairs: readonly number[];
        if (idx === 5 || idx === 10) {
          const centreIn = (tl + tr + br + bl) / 4 >= level;
          // 5: tr, bl inside; 10: tl, br inside
          pairs = (idx === 5) === centreIn ? [3, 0, 2, 1] : [3, 2, 0, 1];
        } else {
          pairs = CASES[idx]!;
        }
        for (let k = 0; k < pairs.length; k += 2) {
          const [x0, y0] = point(c, r, pairs[k]!, tl, tr, br, bl);
          const [x1, y1] = point(c, r, pairs[k + 1]!, tl, tr, br, bl);
          seg.push(x0, y0, x1, y1);
        }
      }
    }
    return { level, segments: Float64Array.from(seg) };
  });
}

/**
 * Contour view of a scalar field (density, temperature): the field on a sequential colour map with
 * contour lines at `levels` (default: about `count` nice values inside the data range).
 * @param options `quantity`, `unit`, `levels` or `count` (default 10).
 */
export function contourView(field: Field, options: { quantity: string; unit: string; levels?: readonly number[]; count?: number }): ScalarView {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of field.data) {
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!(hi >= lo)) {
    lo = 0;
    hi = 1;
  }
  if (hi === lo) hi = lo + (Math.abs(lo) * 0.01 || 1);
  const tol = 1e-4 * (hi - lo); // keep levels off the extremes (float32 noise would draw stray lines)
  const levels = options.levels ?? niceTicks(lo, hi, options.count ?? 10).filter((v) => v > lo + tol && v < hi - tol);
  return {
    kind: 'contours',
    field,
    range: [lo, hi],
    colormap: 'sequential',
    quantity: options.quantity,
    unit: options.unit,
    contours: contourLines(field, levels),
  };
}
