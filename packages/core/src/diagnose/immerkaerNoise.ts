/**
 * Fast noise standard deviation estimate of Immerkær (1996), "Fast noise variance estimation",
 * Computer Vision and Image Understanding 64(2):300–302: convolve with the difference of two
 * Laplacian masks, N = [[1, −2, 1], [−2, 4, −2], [1, −2, 1]], and
 * σ = √(π/2) · Σ|I ∗ N| / (6 (W − 2)(H − 2)).
 * The mask cancels locally linear (and most smooth) structure; fine texture such as 2–3 px dot images
 * leaks through, so on dot images this is an upper bound of the white noise.
 * @returns σ in the image's intensity units (NaN pixels are skipped).
 */
import type { Field } from '../util/field.js';

export function immerkaerNoise(f: Field): number {
  const { width: W, height: H, data: d } = f;
  if (W < 3 || H < 3) return NaN;
  let s = 0;
  let n = 0;
  for (let y = 1; y < H - 1; y++) {
    for (let x = 1; x < W - 1; x++) {
      const i = x + y * W;
      const v =
        d[i - W - 1]! - 2 * d[i - W]! + d[i - W + 1]! - 2 * d[i - 1]! + 4 * d[i]! - 2 * d[i + 1]! + d[i + W - 1]! - 2 * d[i + W]! + d[i + W + 1]!;
      if (Number.isFinite(v)) {
        s += Math.abs(v);
        n++;
      }
    }
  }
  return n ? (Math.sqrt(Math.PI / 2) * s) / (6 * n) : NaN;
}
