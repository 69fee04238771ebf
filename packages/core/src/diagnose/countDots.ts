/**
 * Dot count by local extrema: a pixel counts as one dot when it is the strict maximum of its 3×3
 * neighbourhood (after flipping dark dots to bright) and stands above the median by more than
 * `threshold`. Overlapping dot images that merge into one blob count once, so this undercounts
 * dense patterns of large dots; it is a guide for the window size, not a measurement.
 */
import type { Field } from '../util/field.js';

/**
 * @param f image.
 * @param bright true when dots are brighter than the background.
 * @param median median intensity.
 * @param threshold minimum height above (or depth below) the median, intensity units.
 * @returns number of dots found.
 */
export function countDots(f: Field, bright: boolean, median: number, threshold: number): number {
  const { width: W, height: H, data: d } = f;
  const sg = bright ? 1 : -1;
  let count = 0;
  for (let y = 1; y < H - 1; y++) {
    for (let x = 1; x < W - 1; x++) {
      const i = x + y * W;
      const v = sg * d[i]!;
      if (!(v - sg * median > threshold)) continue;
      // strict maximum against the earlier neighbours, ≥ against the later ones (plateaus count once)
      if (v > sg * d[i - W - 1]! && v > sg * d[i - W]! && v > sg * d[i - W + 1]! && v > sg * d[i - 1]! &&
          v >= sg * d[i + 1]! && v >= sg * d[i + W - 1]! && v >= sg * d[i + W]! && v >= sg * d[i + W + 1]!) count++;
    }
  }
  return count;
}
