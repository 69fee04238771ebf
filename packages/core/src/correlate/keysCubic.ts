/**
 * Keys cubic convolution image interpolation (a = −½, 4×4 taps, no prefilter): the cheap interpolator
 * of intermediate deformation passes, whose bias the final pass (Lanczos-4) corrects.
 *
 * Reference: R. G. Keys, "Cubic convolution interpolation for digital image processing",
 * IEEE Trans. Acoustics, Speech, and Signal Processing 29(6):1153–1160 (1981).
 */
function clampIndex(i: number, n: number): number {
  return i < 0 ? 0 : i >= n ? n - 1 : i;
}

/**
 * Keys cubic value of `img` at (x, y); NaN where the kernel would reach beyond the image (x < 1 or
 * x > width − 2, likewise y), except at whole-pixel positions (the pixel itself).
 */
export function sampleKeys(img: Float32Array, width: number, height: number, x: number, y: number): number {
  if (!(x >= 1 && x <= width - 2 && y >= 1 && y <= height - 2)) {
    if (x === Math.round(x) && y === Math.round(y) && x >= 0 && x < width && y >= 0 && y < height) return img[x + y * width]!;
    return NaN;
  }
  const ix = Math.floor(x);
  const iy = Math.floor(y);
  const t = x - ix;
  const u = y - iy;
  const t2 = t * t;
  const t3 = t2 * t;
  const u2 = u * u;
  const u3 = u2 * u;
  const a0 = 0.5 * (-t3 + 2 * t2 - t);
  const a1 = 0.5 * (3 * t3 - 5 * t2 + 2);
  const a2 = 0.5 * (-3 * t3 + 4 * t2 + t);
  const a3 = 0.5 * (t3 - t2);
  const b0 = 0.5 * (-u3 + 2 * u2 - u);
  const b1 = 0.5 * (3 * u3 - 5 * u2 + 2);
  const b2 = 0.5 * (-3 * u3 + 4 * u2 + u);
  const b3 = 0.5 * (u3 - u2);
  if (ix >= 1 && ix + 2 < width && iy >= 1 && iy + 2 < height) {
    let k = ix - 1 + (iy - 1) * width;
    let s = b0 * (a0 * img[k]! + a1 * img[k + 1]! + a2 * img[k + 2]! + a3 * img[k + 3]!);
    k += width;
    s += b1 * (a0 * img[k]! + a1 * img[k + 1]! + a2 * img[k + 2]! + a3 * img[k + 3]!);
    k += width;
    s += b2 * (a0 * img[k]! + a1 * img[k + 1]! + a2 * img[k + 2]! + a3 * img[k + 3]!);
    k += width;
    s += b3 * (a0 * img[k]! + a1 * img[k + 1]! + a2 * img[k + 2]! + a3 * img[k + 3]!);
    return s;
  }
  const x0 = clampIndex(ix - 1, width);
  const x1 = clampIndex(ix, width);
  const x2 = clampIndex(ix + 1, width);
  const x3 = clampIndex(ix + 2, width);
  let s = 0;
  for (let j = 0; j < 4; j++) {
    const row = clampIndex(iy - 1 + j, height) * width;
    const b = j === 0 ? b0 : j === 1 ? b1 : j === 2 ? b2 : b3;
    s += b * (a0 * img[row + x0]! + a1 * img[row + x1]! + a2 * img[row + x2]! + a3 * img[row + x3]!);
  }
  return s;
}

/**
 * One image row of a deformation: out[o + x] = value of `img` at (x + s·hx[x], y + s·hy[x]) for
 * x = 0 … width − 1, by {@link sampleKeys} (border rules included). The TypeScript reference and
 * fallback of the SIMD row kernel in kernels.wat, which the engine uses where WebAssembly SIMD is present.
 * @returns true when some value is NaN (kernel beyond the image).
 */
export function keysRow(img: Float32Array, width: number, height: number, y: number, hx: Float64Array, hy: Float64Array, s: number, out: Float32Array, o: number): boolean {
  let nan = false;
  for (let x = 0; x < width; x++) {
    const v = sampleKeys(img, width, height, x + s * hx[x]!, y + s * hy[x]!);
    out[o + x] = v;
    if (!(v === v)) nan = true;
  }
  return nan;
}
