/**
 * Mean autocorrelation of an image's intensity fluctuations, averaged over tiles.
 *
 * Each tile (side `tile` px) has its mean removed, is zero-padded to twice its size and correlated
 * with itself through the FFT (Wiener–Khinchin); the sum over tiles is divided by the number of pixel
 * pairs at each lag, `(T − |kx|)·(T − |ky|)·tiles`, so the estimate is unbiased (no wrap-around and no
 * edge taper). Returns lags −maxLag…maxLag in both axes.
 */
import type { Field } from '../util/field.js';
import { createFft2 } from './fft2.js';

/** Autocorrelation samples on a (2·maxLag + 1)² grid; value at lag (kx, ky) is `at(kx, ky)`. */
export interface Autocorrelation {
  readonly maxLag: number;
  /** Row-major, lag (kx, ky) at index (kx + maxLag) + (ky + maxLag)·(2·maxLag + 1). */
  readonly values: Float64Array;
  readonly tiles: number;
  at(kx: number, ky: number): number;
}

/**
 * @param f image (any intensity scale); NaN pixels make their tile skipped.
 * @param tile tile side, px, power of two (default 64; smaller images use the largest that fits).
 * @param maxLag largest lag returned, px (default 10).
 * @param maxTiles at most this many tiles, spread evenly (default 64).
 */
export function meanAutocorrelation(f: Field, tile = 64, maxLag = 10, maxTiles = 64): Autocorrelation {
  let T = tile;
  while (T > 8 && (T > f.width || T > f.height)) T /= 2;
  const n = 2 * T;
  const fft = createFft2(n);
  const buf = new Float64Array(2 * n * n);
  const acc = new Float64Array(n * n);
  const nx = Math.floor(f.width / T);
  const ny = Math.floor(f.height / T);
  const all: Array<[number, number]> = [];
  for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) all.push([i * T + Math.floor((f.width - nx * T) / 2), j * T + Math.floor((f.height - ny * T) / 2)]);
  const step = Math.max(1, all.length / maxTiles);
  let used = 0;
  for (let t = 0; t < all.length && used < maxTiles; t = Math.floor(++used * step)) {
    const [x0, y0] = all[t]!;
    let s = 0;
    let bad = false;
    for (let y = 0; y < T && !bad; y++) for (let x = 0; x < T; x++) {
      const v = f.data[x0 + x + (y0 + y) * f.width]!;
      if (!Number.isFinite(v)) {
        bad = true;
        break;
      }
      s += v;
    }
    if (bad) {
      used--;
      continue;
    }
    const mean = s / (T * T);
    buf.fill(0);
    for (let y = 0; y < T; y++) for (let x = 0; x < T; x++) buf[2 * (x + n * y)] = f.data[x0 + x + (y0 + y) * f.width]! - mean;
    fft.run(buf, false);
    for (let k = 0; k < n * n; k++) {
      const re = buf[2 * k]!;
      const im = buf[2 * k + 1]!;
      buf[2 * k] = re * re + im * im;
      buf[2 * k + 1] = 0;
    }
    fft.run(buf, true);
    for (let k = 0; k < n * n; k++) acc[k]! += buf[2 * k]!;
  }
  const tiles = Math.max(used, 0);
  const L = Math.min(maxLag, T - 1);
  const w = 2 * L + 1;
  const values = new Float64Array(w * w);
  for (let ky = -L; ky <= L; ky++) {
    for (let kx = -L; kx <= L; kx++) {
      const idx = ((kx + n) % n) + ((ky + n) % n) * n;
      const pairs = (T - Math.abs(kx)) * (T - Math.abs(ky)) * tiles;
      values[kx + L + (ky + L) * w] = pairs > 0 ? acc[idx]! / pairs : NaN;
    }
  }
  return { maxLag: L, values, tiles, at: (kx, ky) => values[kx + L + (ky + L) * w]! };
}
