/**
 * Least-squares integration of a gradient field on a masked grid (any shape, holes) by conjugate
 * gradients preconditioned with a multigrid V-cycle (multigridPreconditioner.ts). Same discrete
 * problem as {@link poissonDct} (see gradientRhs.ts), restricted to the valid nodes and their edges;
 * each connected component of valid nodes gets its own free constant.
 *
 * References: Hestenes, M. R. & Stiefel, E. (1952). Methods of conjugate gradients for solving linear
 * systems. J. Res. Natl. Bur. Stand. 49(6):409–436; Tatebe, O. (1993). The multigrid preconditioned
 * conjugate gradient method. NASA CP-3224:621–634. A consistent singular system (the right-hand side
 * sums to zero on each component) converges in CG from a zero start (Kaasschieter, E. F. (1988).
 * Preconditioned conjugate gradients for solving singular systems. J. Comput. Appl. Math. 24:265–275).
 */
import { gradientRhs } from './gradientRhs.js';
import { multigridPreconditioner } from './multigridPreconditioner.js';

/** Options of {@link poissonCg}. */
export interface PoissonCgOptions {
  /** Stop when ‖r‖ ≤ tolerance·‖b‖. Default 1e-8. */
  readonly tolerance?: number;
  /** Iteration cap. Default 2000. */
  readonly maxIterations?: number;
}

/** Result of {@link poissonCg}. */
export interface PoissonCgResult {
  /** φ per node (NaN where not valid); each connected component has an arbitrary constant. */
  readonly phi: Float64Array;
  /** Connected-component label per node (−1 where not valid), 0-based. */
  readonly labels: Int32Array;
  readonly components: number;
  readonly iterations: number;
  /** Final ‖r‖/‖b‖. */
  readonly relativeResidual: number;
}

function label(valid: Uint8Array, width: number, height: number): { labels: Int32Array; count: number } {
  const n = width * height;
  const labels = new Int32Array(n).fill(-1);
  const stack = new Int32Array(n);
  let count = 0;
  for (let s = 0; s < n; s++) {
    if (!valid[s] || labels[s]! >= 0) continue;
    let top = 0;
    stack[top++] = s;
    labels[s] = count;
    while (top > 0) {
      const p = stack[--top]!;
      const x = p % width;
      const y = (p - x) / width;
      if (x > 0 && valid[p - 1] && labels[p - 1]! < 0) (labels[p - 1] = count), (stack[top++] = p - 1);
      if (x + 1 < width && valid[p + 1] && labels[p + 1]! < 0) (labels[p + 1] = count), (stack[top++] = p + 1);
      if (y > 0 && valid[p - width] && labels[p - width]! < 0) (labels[p - width] = count), (stack[top++] = p - width);
      if (y + 1 < height && valid[p + width] && labels[p + width]! < 0) (labels[p + width] = count), (stack[top++] = p + width);
    }
    count++;
  }
  return { labels, count };
}

/**
 * Integrate ∇φ = (gx, gy) over the nodes where both components are finite (image frame: x right,
 * y down). Use {@link poissonDct} instead when every node is valid (same answer, much faster).
 * @param gx gradient along +x per metre (NaN = no data). @param gy along +y (down), per metre.
 * @param hx grid step along x, m. @param hy grid step along y, m.
 */
export function poissonCg(
  gx: ArrayLike<number>,
  gy: ArrayLike<number>,
  width: number,
  height: number,
  hx: number,
  hy: number,
  options: PoissonCgOptions = {},
): PoissonCgResult {
  const tol = options.tolerance ?? 1e-8;
  const maxIt = options.maxIterations ?? 2000;
  const n = width * height;
  const valid = new Uint8Array(n);
  for (let i = 0; i < n; i++) valid[i] = Number.isFinite(gx[i]!) && Number.isFinite(gy[i]!) ? 1 : 0;
  const { labels, count } = label(valid, width, height);
  const b = new Float64Array(n);
  gradientRhs(gx, gy, valid, width, height, hx, hy, b);
  const wr = new Uint8Array(n);
  const wd = new Uint8Array(n);
  for (let p = 0; p < n; p++) {
    if (!valid[p]) continue;
    const x = p % width;
    if (x + 1 < width && valid[p + 1]) wr[p] = 1;
    if (p + width < n && valid[p + width]) wd[p] = 1;
  }
  const mg = multigridPreconditioner(valid, width, height);
  const x = new Float64Array(n);
  const r = b.slice();
  const z = new Float64Array(n);
  const p = new Float64Array(n);
  const q = new Float64Array(n);
  let bn = 0;
  for (let k = 0; k < n; k++) bn += b[k]! * b[k]!;
  bn = Math.sqrt(bn);
  let it = 0;
  let rel = 0;
  if (bn > 0) {
    mg.apply(r, z);
    p.set(z);
    let rz = 0;
    for (let k = 0; k < n; k++) rz += r[k]! * z[k]!;
    for (it = 1; it <= maxIt; it++) {
      q.fill(0);
      for (let k = 0; k < n; k++) {
        if (wr[k]) {
          const d = p[k]! - p[k + 1]!;
          q[k]! += d;
          q[k + 1]! -= d;
        }
        if (wd[k]) {
          const d = p[k]! - p[k + width]!;
          q[k]! += d;
          q[k + width]! -= d;
        }
      }
      let pq = 0;
      for (let k = 0; k < n; k++) pq += p[k]! * q[k]!;
      if (!(pq > 0)) break;
      const alpha = rz / pq;
      let rn = 0;
      for (let k = 0; k < n; k++) {
        x[k]! += alpha * p[k]!;
        r[k]! -= alpha * q[k]!;
        rn += r[k]! * r[k]!;
      }
      rel = Math.sqrt(rn) / bn;
      if (rel <= tol) break;
      mg.apply(r, z);
      let rz2 = 0;
      for (let k = 0; k < n; k++) if (valid[k]) rz2 += r[k]! * z[k]!;
      const beta = rz2 / rz;
      rz = rz2;
      for (let k = 0; k < n; k++) p[k] = valid[k] ? z[k]! + beta * p[k]! : 0;
    }
    if (it > maxIt) it = maxIt;
  }
  const phi = new Float64Array(n);
  for (let k = 0; k < n; k++) phi[k] = valid[k] ? x[k]! : NaN;
  return { phi, labels, components: count, iterations: it, relativeResidual: rel };
}
