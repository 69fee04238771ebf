/**
 * Right-hand side of the least-squares integration of a gradient field (shared by both Poisson
 * solvers). Private helper.
 *
 * Least squares on the grid graph: minimise Σ over edges (φ_q − φ_p − t_pq)² where an edge joins two
 * valid 4-neighbours and its target is the trapezoid rule t_pq = h·(g_p + g_q)/2 of the gradient
 * component along the edge. The normal equations are L φ = b with L the graph Laplacian (degree on
 * the diagonal, −1 per neighbour: the 5-point Laplacian with Neumann boundaries) and
 * b_p = −Σ_q t_pq. Image frame: x right, y down (row index); steps hx, hy in metres.
 */
export function gradientRhs(
  gx: ArrayLike<number>,
  gy: ArrayLike<number>,
  valid: Uint8Array,
  width: number,
  height: number,
  hx: number,
  hy: number,
  out: Float64Array,
): void {
  out.fill(0);
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const p = x + y * width;
      if (!valid[p]) continue;
      if (x + 1 < width && valid[p + 1]) {
        const t = 0.5 * hx * (gx[p]! + gx[p + 1]!);
        out[p]! -= t;
        out[p + 1]! += t;
      }
      if (y + 1 < height && valid[p + width]) {
        const t = 0.5 * hy * (gy[p]! + gy[p + width]!);
        out[p]! -= t;
        out[p + width]! += t;
      }
    }
  }
}
