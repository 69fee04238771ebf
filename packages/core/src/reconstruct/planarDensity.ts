/**
 * Planar density from the density gradient: least-squares integration (DCT solver on a full
 * rectangle, multigrid-preconditioned CG on masked grids), then each connected region is shifted so
 * that the mean density over its valid reference nodes equals the reference density (Neumann solve,
 * then anchor). Regions without reference nodes are left NaN.
 *
 * Frame: integration runs in the image frame (x right, y down = row index) on the vector grid; the
 * y flip to y_m-up happens only in the outputs of reconstructDensity.
 */
import { poissonCg } from './poissonCg.js';
import { poissonDct } from './poissonDct.js';

export type PoissonSolver = 'auto' | 'dct' | 'cg';

export interface PlanarDensityResult {
  readonly rho: Float64Array;
  readonly solver: 'dct' | 'cg';
  readonly iterations: number;
  /** Valid nodes left NaN because their region holds no reference node. */
  readonly unanchored: number;
}

/**
 * @param gx ∂ρ/∂x (x right), kg/m⁴, row-major cols×rows, NaN = no data.
 * @param gy ∂ρ/∂y (y DOWN, image frame), kg/m⁴.
 * @param hx, hy grid steps, m. @param isReference 1 for reference nodes.
 * @param solver 'dct' needs every node valid; 'auto' picks dct when it can.
 */
export function planarDensity(
  gx: Float64Array,
  gy: Float64Array,
  cols: number,
  rows: number,
  hx: number,
  hy: number,
  isReference: Uint8Array,
  referenceDensity: number,
  solver: PoissonSolver = 'auto',
  tolerance = 1e-8,
): PlanarDensityResult {
  const n = cols * rows;
  let allValid = true;
  for (let i = 0; i < n; i++) if (!Number.isFinite(gx[i]!) || !Number.isFinite(gy[i]!)) (allValid = false);
  const useDct = solver === 'dct' || (solver === 'auto' && allValid);
  let phi: Float64Array;
  let labels: Int32Array;
  let count: number;
  let iterations = 0;
  if (useDct) {
    if (!allValid) throw new Error('poissonDct needs every node valid');
    phi = poissonDct(gx, gy, cols, rows, hx, hy);
    labels = new Int32Array(n);
    count = n > 0 ? 1 : 0;
  } else {
    const r = poissonCg(gx, gy, cols, rows, hx, hy, { tolerance });
    phi = r.phi;
    labels = r.labels;
    count = r.components;
    iterations = r.iterations;
  }
  const sum = new Float64Array(count);
  const num = new Float64Array(count);
  for (let i = 0; i < n; i++) {
    const l = labels[i]!;
    if (l >= 0 && isReference[i]) {
      sum[l]! += phi[i]!;
      num[l]! += 1;
    }
  }
  const rho = new Float64Array(n);
  let unanchored = 0;
  for (let i = 0; i < n; i++) {
    const l = labels[i]!;
    if (l < 0) rho[i] = NaN;
    else if (num[l]! === 0) {
      rho[i] = NaN;
      unanchored++;
    } else rho[i] = phi[i]! - sum[l]! / num[l]! + referenceDensity;
  }
  return { rho, solver: useDct ? 'dct' : 'cg', iterations, unanchored };
}
