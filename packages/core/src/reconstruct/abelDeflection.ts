/**
 * Abel inversion of deflection data (deflection form of the inverse Abel transform):
 *
 *   n(r) − n∞ = −(n∞/π) ∫_r^∞ ε(y) / √(y² − r²) dy,
 *
 * with ε(y) the deflection angle (rad) measured at lateral distance y from the axis, positive away
 * from the axis (toward larger y), i.e. the derivative of the projection divided by n∞.
 *
 * Discretisation ("two-point"): ε is taken piecewise linear between the samples y_j = jΔ and the
 * kernel is integrated exactly over each interval, so the operator is upper triangular,
 * Δn_i = −(n∞/π) Σ_{j≥i} D_ij ε_j, and independent of Δ. ε(0) = 0 by symmetry (ε is odd about the
 * axis). The samples beyond the last one are taken as zero (undisturbed far field).
 *
 * References: Kolhe, P. S. & Agrawal, A. K. (2009). Abel inversion of deflectometric data:
 * comparison of accuracy and noise propagation of existing techniques. Applied Optics
 * 48(20):3894–3902 (deflection-form operators, recommends the two-point scheme); Dasch, C. J. (1992).
 * One-dimensional tomography: a comparison of Abel, onion-peeling, and filtered backprojection
 * methods. Applied Optics 31(8):1146–1152 (the operator-matrix formulation).
 */
import { Matrix } from 'ml-matrix';

const cache = new Map<number, { matrix: Matrix; flat: Float64Array }>();

function build(n: number): { matrix: Matrix; flat: Float64Array } {
  const flat = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i; j + 1 < n; j++) {
      const a = j;
      const b = j + 1;
      const sa = Math.sqrt(Math.max(a * a - i * i, 0));
      const sb = Math.sqrt(b * b - i * i);
      const i1 = sb - sa; // ∫ u du / √(u² − i²)
      if (i === 0 && j === 0) {
        // ε(u) = ε_1·u on [0, 1] (ε_0 = 0 on the axis): ∫ ε_1 u / u du = ε_1
        flat[1] = flat[1]! + i1;
        continue;
      }
      const i0 = Math.log((b + sb) / (a + sa)); // ∫ du / √(u² − i²)
      flat[i * n + j] = flat[i * n + j]! + (b * i0 - i1);
      flat[i * n + j + 1] = flat[i * n + j + 1]! + (i1 - a * i0);
    }
  }
  const rows: number[][] = [];
  for (let i = 0; i < n; i++) rows.push(Array.from(flat.subarray(i * n, (i + 1) * n)));
  return { matrix: new Matrix(rows), flat };
}

function operator(n: number): { matrix: Matrix; flat: Float64Array } {
  let op = cache.get(n);
  if (!op) {
    op = build(n);
    if (cache.size > 32) cache.clear();
    cache.set(n, op);
  }
  return op;
}

/**
 * The dimensionless operator D (N×N, upper triangular) of the two-point deflection-form inversion:
 * `∫_{r_i}^∞ ε(y)/√(y² − r_i²) dy ≈ Σ_j D_ij ε_j` for samples at r_j = jΔ. Cached per size.
 */
export function abelDeflectionOperator(n: number): Matrix {
  return operator(n).matrix;
}

/**
 * Invert one radial profile of deflection.
 * @param eps deflection (rad) at r_j = jΔ, j = 0…N−1, positive away from the axis; NaN = no data.
 * @param nInf refractive index far from the axis.
 * @param out receives n(r_i) − n∞ (length N). Where any sample at or outside r_i (ε_0 excepted for
 *   i = 0) is NaN the result is NaN: the inversion runs from the outer edge inward and stops at the
 *   first gap (e.g. a model in view).
 */
export function abelInvertDeflection(eps: ArrayLike<number>, nInf: number, out: Float64Array): void {
  const n = eps.length;
  const { flat } = operator(n);
  let lastGap = -1;
  for (let j = n - 1; j >= 1; j--) {
    if (!Number.isFinite(eps[j]!)) {
      lastGap = j;
      break;
    }
  }
  const c = -nInf / Math.PI;
  for (let i = 0; i < n; i++) {
    if (i <= lastGap) {
      out[i] = NaN;
      continue;
    }
    let s = 0;
    const row = i * n;
    for (let j = Math.max(i, 1); j < n; j++) s += flat[row + j]! * eps[j]!;
    out[i] = c * s;
  }
}
