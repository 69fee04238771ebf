/**
 * Sums and counts of the finite pixels of an n × n window at (x0, y0) in two images of row stride
 * `stride`: a plain sum first (two partial sums each, n even), which is NaN when some pixel is
 * missing; only then are pixels counted one by one. Written into `out` = [sumA, sumB, countA, countB]
 * (no allocation per window).
 */
export function windowSums(A: Float32Array, B: Float32Array, stride: number, x0: number, y0: number, n: number, out: Float64Array): void {
  let sa = 0;
  let sb = 0;
  let sa1 = 0;
  let sb1 = 0;
  for (let r = 0; r < n; r++) {
    let k = x0 + (y0 + r) * stride;
    for (let c = 0; c < n; c += 2, k += 2) {
      sa += A[k]!;
      sb += B[k]!;
      sa1 += A[k + 1]!;
      sb1 += B[k + 1]!;
    }
  }
  sa += sa1;
  sb += sb1;
  let na = n * n;
  let nb = n * n;
  if (!(sa === sa && sb === sb)) {
    sa = sb = na = nb = 0;
    for (let r = 0; r < n; r++) {
      let k = x0 + (y0 + r) * stride;
      for (let c = 0; c < n; c++, k++) {
        const a = A[k]!;
        const b = B[k]!;
        if (a === a) (sa += a), na++;
        if (b === b) (sb += b), nb++;
      }
    }
  }
  out[0] = sa;
  out[1] = sb;
  out[2] = na;
  out[3] = nb;
}
