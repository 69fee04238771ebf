import type { VectorGrid } from './types.js';

/**
 * The grid of interrogation windows of side `windowPx` laid every `stepPx` over an image.
 *
 * A window covering pixels x₀ … x₀ + W − 1 has its centre at x₀ + (W − 1)/2 (pixel centres at integer
 * coordinates). There are `floor((width − W)/step) + 1` columns (likewise rows); the block of windows
 * is centred in the image (the spare `(width − W) mod step` pixels split between both sides, the
 * extra one on the right/bottom).
 *
 * @param width image width, px; @param height image height, px.
 * @param windowPx window side, px (≤ width and ≤ height; checked by the caller).
 * @param stepPx window spacing, px (≥ 1).
 * @returns the {@link VectorGrid}; `firstX(grid)`-style origins are `xPx[0] − (W − 1)/2`.
 */
export function windowGrid(width: number, height: number, windowPx: number, stepPx: number): VectorGrid {
  const cols = Math.floor((width - windowPx) / stepPx) + 1;
  const rows = Math.floor((height - windowPx) / stepPx) + 1;
  const x0 = Math.floor((width - windowPx - (cols - 1) * stepPx) / 2);
  const y0 = Math.floor((height - windowPx - (rows - 1) * stepPx) / 2);
  const half = (windowPx - 1) / 2;
  const xPx = new Float64Array(cols);
  const yPx = new Float64Array(rows);
  for (let c = 0; c < cols; c++) xPx[c] = x0 + half + c * stepPx;
  for (let r = 0; r < rows; r++) yPx[r] = y0 + half + r * stepPx;
  return { cols, rows, xPx, yPx, imageWidth: width, imageHeight: height };
}
