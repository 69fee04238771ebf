/**
 * Multigrid V-cycle for the weighted graph Laplacian of a masked grid, used as the preconditioner of
 * the conjugate-gradient Poisson solver. Private helper.
 *
 * Coarsening by 2×2 aggregation with piecewise-constant prolongation; the coarse operator is the
 * Galerkin product PᵀAP, which on a grid is again a 4-neighbour Laplacian whose edge weights count the
 * fine edges between two aggregates. The coarse correction is scaled by `overCorrection` (unsmoothed
 * aggregation under-estimates smooth errors; Braess, D. (1995). Towards algebraic multigrid for
 * elliptic problems of second order. Computing 55:379–393). Smoothing: forward Gauss–Seidel before,
 * backward after, so the cycle is a symmetric operator (needed for CG; Tatebe, O. (1993). The
 * multigrid preconditioned conjugate gradient method. NASA CP-3224:621–634).
 */

interface Level {
  readonly w: number;
  readonly h: number;
  /** weight of the edge to the right neighbour (0 = none). */
  readonly wr: Float64Array;
  /** weight of the edge to the neighbour below. */
  readonly wd: Float64Array;
  readonly diag: Float64Array;
  readonly x: Float64Array;
  readonly b: Float64Array;
  readonly r: Float64Array;
}

function makeLevel(w: number, h: number, wr: Float64Array, wd: Float64Array): Level {
  const n = w * h;
  const diag = new Float64Array(n);
  for (let y = 0; y < h; y++) {
    for (let x = 0; x < w; x++) {
      const p = x + y * w;
      const a = wr[p]!;
      const c = wd[p]!;
      diag[p]! += a + c;
      if (a) diag[p + 1]! += a;
      if (c) diag[p + w]! += c;
    }
  }
  return { w, h, wr, wd, diag, x: new Float64Array(n), b: new Float64Array(n), r: new Float64Array(n) };
}

function coarsen(f: Level): Level | null {
  if (f.w <= 2 && f.h <= 2) return null;
  const w = Math.ceil(f.w / 2);
  const h = Math.ceil(f.h / 2);
  const wr = new Float64Array(w * h);
  const wd = new Float64Array(w * h);
  for (let y = 0; y < f.h; y++) {
    for (let x = 0; x < f.w; x++) {
      const p = x + y * f.w;
      const cp = (x >> 1) + (y >> 1) * w;
      if (f.wr[p]! && (x & 1) === 1) wr[cp]! += f.wr[p]!;
      if (f.wd[p]! && (y & 1) === 1) wd[cp]! += f.wd[p]!;
    }
  }
  return makeLevel(w, h, wr, wd);
}

function gaussSeidel(L: Level, forward: boolean, sweeps: number): void {
  const { w, h, wr, wd, diag, x, b } = L;
  const n = w * h;
  for (let s = 0; s < sweeps; s++) {
    for (let i = 0; i < n; i++) {
      const p = forward ? i : n - 1 - i;
      const dg = diag[p]!;
      if (dg === 0) continue;
      const cx = p % w;
      let v = b[p]!;
      if (cx + 1 < w) v += wr[p]! * x[p + 1]!;
      if (cx > 0) v += wr[p - 1]! * x[p - 1]!;
      if (p + w < n) v += wd[p]! * x[p + w]!;
      if (p >= w) v += wd[p - w]! * x[p - w]!;
      x[p] = v / dg;
    }
  }
}

function residual(L: Level): void {
  const { w, h, wr, wd, diag, x, b, r } = L;
  const n = w * h;
  for (let p = 0; p < n; p++) {
    const cx = p % w;
    let v = diag[p]! * x[p]!;
    if (cx + 1 < w) v -= wr[p]! * x[p + 1]!;
    if (cx > 0) v -= wr[p - 1]! * x[p - 1]!;
    if (p + w < n) v -= wd[p]! * x[p + w]!;
    if (p >= w) v -= wd[p - w]! * x[p - w]!;
    r[p] = b[p]! - v;
  }
}

/** A symmetric V-cycle z ≈ A⁺ r on the full-grid index space (invalid nodes are ignored). */
export interface MultigridPreconditioner {
  apply(r: Float64Array, z: Float64Array): void;
}

/**
 * Build the V-cycle for a grid whose valid nodes are `valid` (4-neighbour edges between valid nodes).
 * @param overCorrection coarse-correction scale, default 1.8.
 */
export function multigridPreconditioner(valid: Uint8Array, width: number, height: number, overCorrection = 1.8): MultigridPreconditioner {
  const n = width * height;
  const wr = new Float64Array(n);
  const wd = new Float64Array(n);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const p = x + y * width;
      if (!valid[p]) continue;
      if (x + 1 < width && valid[p + 1]) wr[p] = 1;
      if (y + 1 < height && valid[p + width]) wd[p] = 1;
    }
  }
  const levels: Level[] = [makeLevel(width, height, wr, wd)];
  for (;;) {
    const c = coarsen(levels[levels.length - 1]!);
    if (!c) break;
    levels.push(c);
  }
  const cycle = (li: number): void => {
    const L = levels[li]!;
    if (li === levels.length - 1) {
      L.x.fill(0);
      for (let s = 0; s < 20; s++) {
        gaussSeidel(L, true, 1);
        gaussSeidel(L, false, 1);
      }
      return;
    }
    gaussSeidel(L, true, 1);
    residual(L);
    const C = levels[li + 1]!;
    C.b.fill(0);
    for (let y = 0; y < L.h; y++) for (let x = 0; x < L.w; x++) C.b[(x >> 1) + (y >> 1) * C.w]! += L.r[x + y * L.w]!;
    C.x.fill(0);
    cycle(li + 1);
    for (let y = 0; y < L.h; y++) for (let x = 0; x < L.w; x++) L.x[x + y * L.w]! += overCorrection * C.x[(x >> 1) + (y >> 1) * C.w]!;
    gaussSeidel(L, false, 1);
  };
  return {
    apply(r, z) {
      const L0 = levels[0]!;
      L0.b.set(r);
      L0.x.fill(0);
      cycle(0);
      z.set(L0.x);
    },
  };
}
