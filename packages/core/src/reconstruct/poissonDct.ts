/**
 * Least-squares integration of a gradient field on a full rectangle (no missing data) with the
 * discrete cosine transform: the Neumann 5-point Laplacian is diagonal in the DCT-II basis, with
 * eigenvalues (2 − 2cos(πk/W)) + (2 − 2cos(πl/H)).
 *
 * References: Simchony, T., Chellappa, R. & Shao, M. (1990). Direct analytical methods for solving
 * Poisson equations in computer vision problems. IEEE Trans. PAMI 12(5):435–446; the DCT itself via
 * Makhoul 1980 (see dct.ts).
 */
import { dctPlan } from './dct.js';
import { gradientRhs } from './gradientRhs.js';

/**
 * Integrate ∇φ = (gx, gy) over a full W×H grid (image frame: x right, y down).
 * @param gx gradient along +x, per metre, row-major W×H, all finite.
 * @param gy gradient along +y (down), per metre, all finite.
 * @param hx grid step along x, m. @param hy grid step along y, m.
 * @returns φ (Float64Array, row-major) with zero mean; the constant is free (anchor it afterwards).
 * Cost O(WH·log) for power-of-two sizes, Bluestein otherwise.
 */
export function poissonDct(gx: ArrayLike<number>, gy: ArrayLike<number>, width: number, height: number, hx: number, hy: number): Float64Array {
  const n = width * height;
  const valid = new Uint8Array(n).fill(1);
  const b = new Float64Array(n);
  gradientRhs(gx, gy, valid, width, height, hx, hy, b);
  const px = dctPlan(width);
  const py = dctPlan(height);
  for (let y = 0; y < height; y++) px.forward(b, y * width, 1);
  for (let x = 0; x < width; x++) py.forward(b, x, width);
  const lx = new Float64Array(width);
  const ly = new Float64Array(height);
  for (let k = 0; k < width; k++) lx[k] = 2 - 2 * Math.cos((Math.PI * k) / width);
  for (let l = 0; l < height; l++) ly[l] = 2 - 2 * Math.cos((Math.PI * l) / height);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const lam = lx[x]! + ly[y]!;
      b[x + y * width] = lam > 0 ? b[x + y * width]! / lam : 0;
    }
  }
  for (let x = 0; x < width; x++) py.inverse(b, x, width);
  for (let y = 0; y < height; y++) px.inverse(b, y * width, 1);
  return b;
}
