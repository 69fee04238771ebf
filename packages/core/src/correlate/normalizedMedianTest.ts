/**
 * Normalized median test and replacement of spurious vectors.
 *
 * For each vector U₀ with finite neighbours Uᵢ among its 8 grid neighbours, per component:
 *   r = |U₀ − Uₘ| / (median |Uᵢ − Uₘ| + ε),   Uₘ = median Uᵢ,
 * and the vector is flagged when r > threshold for either component (the 2-D vector fails when one of
 * its components does). Vectors with fewer than 2 finite neighbours are not tested.
 * On the grid's edges, where neighbours are missing, each missing neighbour U(m) is replaced by the
 * linear extrapolation 3·U(−m) − 2·U(−2m) from the opposite side (when those exist), so that a linear
 * field is never flagged there either (a one-sided neighbourhood biases the median); the vector under
 * test never enters its own reference values.
 * Defaults from the paper: threshold 2, ε = 0.1 px.
 *
 * Reference: J. Westerweel & F. Scarano, "Universal outlier detection for PIV data", Experiments in
 * Fluids 39:1096–1100 (2005), doi:10.1007/s00348-005-0016-6.
 */
import type { Field } from '../util/field.js';

const nb = new Float64Array(8);
const res = new Float64Array(8);

function median(v: Float64Array, n: number): number {
  for (let i = 1; i < n; i++) {
    const x = v[i]!;
    let j = i - 1;
    while (j >= 0 && v[j]! > x) (v[j + 1] = v[j]!), j--;
    v[j + 1] = x;
  }
  return n & 1 ? v[n >> 1]! : 0.5 * (v[(n >> 1) - 1]! + v[n >> 1]!);
}

function at(c: Float32Array, cols: number, rows: number, q: number, r: number): number {
  return q < 0 || q >= cols || r < 0 || r >= rows ? NaN : c[q + r * cols]!;
}

function residual(c: Float32Array, cols: number, rows: number, col: number, row: number, eps: number): number {
  let n = 0;
  for (let dr = -1; dr <= 1; dr++)
    for (let dc = -1; dc <= 1; dc++) {
      if (dr === 0 && dc === 0) continue;
      const q = col + dc;
      const r = row + dr;
      let v: number;
      if (q >= 0 && q < cols && r >= 0 && r < rows) v = c[q + r * cols]!;
      // beyond the grid edge: linear extrapolation 3·U(−m) − 2·U(−2m) from the opposite side
      else v = 3 * at(c, cols, rows, col - dc, row - dr) - 2 * at(c, cols, rows, col - 2 * dc, row - 2 * dr);
      if (v === v) nb[n++] = v;
    }
  if (n < 2) return NaN;
  const um = median(nb, n);
  for (let i = 0; i < n; i++) res[i] = Math.abs(nb[i]! - um);
  const rm = median(res, n);
  return Math.abs(c[col + row * cols]! - um) / (rm + eps);
}

/**
 * Flag outliers of a vector field by the normalized median test.
 * @param dx x components (cols × rows), px; @param dy y components, px (NaN = no vector).
 * @param threshold normalised residual above which a vector is flagged (paper: 2).
 * @param epsilonPx noise level ε, px (paper: 0.1).
 * @param out flags, 1 = outlier (written for every vector; non-finite vectors get 0).
 * @returns the number of flagged vectors.
 */
export function normalizedMedianTest(dx: Field, dy: Field, threshold: number, epsilonPx: number, out: Uint8Array): number {
  const cols = dx.width;
  const rows = dx.height;
  let count = 0;
  for (let r = 0; r < rows; r++)
    for (let c = 0; c < cols; c++) {
      const k = c + r * cols;
      out[k] = 0;
      if (!(dx.data[k]! === dx.data[k]!) || !(dy.data[k]! === dy.data[k]!)) continue;
      const rx = residual(dx.data, cols, rows, c, r, epsilonPx);
      const ry = residual(dy.data, cols, rows, c, r, epsilonPx);
      if (rx > threshold || ry > threshold) (out[k] = 1), count++;
    }
  return count;
}

/**
 * Replace the flagged vectors (`replace[k] = 1`) by the component-wise median of their 8 neighbours
 * that are finite and not flagged; vectors with no such neighbour become NaN. Writes in place into
 * `dx`/`dy` (explicit out arguments).
 * @returns the number of vectors left NaN among the flagged ones.
 */
export function replaceByNeighbourMedian(dx: Field, dy: Field, replace: Uint8Array): number {
  const cols = dx.width;
  const rows = dx.height;
  const ox = dx.data.slice();
  const oy = dy.data.slice();
  let lost = 0;
  for (let r = 0; r < rows; r++)
    for (let c = 0; c < cols; c++) {
      const k = c + r * cols;
      if (!replace[k]) continue;
      let n = 0;
      for (let dr = -1; dr <= 1; dr++) {
        const rr = r + dr;
        if (rr < 0 || rr >= rows) continue;
        for (let dc = -1; dc <= 1; dc++) {
          const q = c + dc;
          if ((dr === 0 && dc === 0) || q < 0 || q >= cols) continue;
          const j = q + rr * cols;
          if (replace[j] || !(ox[j]! === ox[j]!) || !(oy[j]! === oy[j]!)) continue;
          nb[n] = ox[j]!;
          res[n] = oy[j]!;
          n++;
        }
      }
      if (n === 0) {
        dx.data[k] = dy.data[k] = NaN;
        lost++;
      } else {
        dx.data[k] = median(nb, n);
        dy.data[k] = median(res, n);
      }
    }
  return lost;
}

/**
 * Fill NaN vectors by repeatedly averaging their finite 8-neighbours (for predictors only; the
 * reported field keeps NaN). An all-NaN field becomes zero. Writes in place.
 */
export function fillHoles(dx: Float32Array, dy: Float32Array, cols: number, rows: number): void {
  const n = cols * rows;
  let missing = 0;
  for (let k = 0; k < n; k++) if (!(dx[k]! === dx[k]!) || !(dy[k]! === dy[k]!)) (dx[k] = dy[k] = NaN), missing++;
  if (missing === n) {
    dx.fill(0);
    dy.fill(0);
    return;
  }
  while (missing > 0) {
    const sx = dx.slice();
    const sy = dy.slice();
    for (let r = 0; r < rows; r++)
      for (let c = 0; c < cols; c++) {
        const k = c + r * cols;
        if (sx[k]! === sx[k]!) continue;
        let ax = 0;
        let ay = 0;
        let m = 0;
        for (let dr = -1; dr <= 1; dr++)
          for (let dc = -1; dc <= 1; dc++) {
            const rr = r + dr;
            const q = c + dc;
            if (rr < 0 || rr >= rows || q < 0 || q >= cols) continue;
            const j = q + rr * cols;
            if (sx[j]! === sx[j]!) (ax += sx[j]!), (ay += sy[j]!), m++;
          }
        if (m > 0) {
          dx[k] = ax / m;
          dy[k] = ay / m;
          missing--;
        }
      }
  }
}
