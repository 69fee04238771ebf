/**
 * Interpolation of a vector-grid field (the predictor of the next pass) to arbitrary image points, by
 * Keys cubic convolution (a = −½) separably in x and y over the regular grid of window centres;
 * outside the grid's span the value is held constant (coordinates clamped to the grid).
 *
 * Reference: R. G. Keys, "Cubic convolution interpolation for digital image processing",
 * IEEE Trans. Acoustics, Speech, and Signal Processing 29(6):1153–1160 (1981).
 */

/** Keys kernel weights for taps −1, 0, +1, +2 at fractional position t ∈ [0, 1]. */
export function keysWeights(t: number, w: Float64Array): void {
  const t2 = t * t;
  const t3 = t2 * t;
  w[0] = 0.5 * (-t3 + 2 * t2 - t);
  w[1] = 0.5 * (3 * t3 - 5 * t2 + 2);
  w[2] = 0.5 * (-3 * t3 + 4 * t2 + t);
  w[3] = 0.5 * (t3 - t2);
}

/** Axis description of a regular grid: node i at `origin + i·step`, `count` nodes. */
export interface GridAxis {
  origin: number;
  step: number;
  count: number;
}

/**
 * Tap indices (4) and weights (4) for coordinate `p` along an axis; written into `idx`/`w` at offset 4·o.
 */
export function axisTaps(axis: GridAxis, p: number, idx: Int32Array, w: Float64Array, o: number, tmp: Float64Array): void {
  const n = axis.count;
  if (n === 1) {
    idx[4 * o] = idx[4 * o + 1] = idx[4 * o + 2] = idx[4 * o + 3] = 0;
    w[4 * o] = w[4 * o + 2] = w[4 * o + 3] = 0;
    w[4 * o + 1] = 1;
    return;
  }
  let g = (p - axis.origin) / axis.step;
  if (g < 0) g = 0;
  else if (g > n - 1) g = n - 1;
  let i = Math.floor(g);
  if (i > n - 2) i = n - 2;
  keysWeights(g - i, tmp);
  for (let j = 0; j < 4; j++) {
    let q = i - 1 + j;
    if (q < 0) q = 0;
    else if (q > n - 1) q = n - 1;
    idx[4 * o + j] = q;
    w[4 * o + j] = tmp[j]!;
  }
}

/**
 * First (x) half of the separable interpolation: every grid row interpolated to every image column.
 * @param gx, gy grid components (cols × rows); @param out{X,Y} rows × width.
 * @param r0, r1 the grid rows to do (default all), so that threads can share the work.
 */
export function predictorRows(
  gx: Float32Array,
  gy: Float32Array,
  ax: GridAxis,
  rows: number,
  width: number,
  outX: Float32Array,
  outY: Float32Array,
  r0 = 0,
  r1 = rows,
): void {
  const idx = new Int32Array(4 * width);
  const w = new Float64Array(4 * width);
  const tmp = new Float64Array(4);
  for (let x = 0; x < width; x++) axisTaps(ax, x, idx, w, x, tmp);
  const cols = ax.count;
  for (let r = r0; r < r1; r++) {
    const o = r * cols;
    const p = r * width;
    for (let x = 0; x < width; x++) {
      const b = 4 * x;
      const i0 = o + idx[b]!;
      const i1 = o + idx[b + 1]!;
      const i2 = o + idx[b + 2]!;
      const i3 = o + idx[b + 3]!;
      outX[p + x] = w[b]! * gx[i0]! + w[b + 1]! * gx[i1]! + w[b + 2]! * gx[i2]! + w[b + 3]! * gx[i3]!;
      outY[p + x] = w[b]! * gy[i0]! + w[b + 1]! * gy[i1]! + w[b + 2]! * gy[i2]! + w[b + 3]! * gy[i3]!;
    }
  }
}

const atIx = new Int32Array(4);
const atIy = new Int32Array(4);
const atWx = new Float64Array(4);
const atWy = new Float64Array(4);
const atTmp = new Float64Array(4);

/** The interpolated grid field at one point (x, y), px. */
export function predictorAt(gx: Float32Array, gy: Float32Array, ax: GridAxis, ay: GridAxis, x: number, y: number, out: Float64Array): void {
  const ix = atIx;
  const iy = atIy;
  const wx = atWx;
  const wy = atWy;
  const tmp = atTmp;
  axisTaps(ax, x, ix, wx, 0, tmp);
  axisTaps(ay, y, iy, wy, 0, tmp);
  let sx = 0;
  let sy = 0;
  for (let j = 0; j < 4; j++)
    for (let i = 0; i < 4; i++) {
      const k = ix[i]! + iy[j]! * ax.count;
      const ww = wx[i]! * wy[j]!;
      sx += ww * gx[k]!;
      sy += ww * gy[k]!;
    }
  out[0] = sx;
  out[1] = sy;
}
