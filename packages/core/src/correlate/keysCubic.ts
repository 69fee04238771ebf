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
 * One image row of a deformation: out[o + x] = Keys cubic value of `img` at (x + s·hx[x], y + s·hy[x])
 * for x = 0 … width − 1 (the same values as {@link sampleKeys}, which handles the border).
 * Neighbouring pixels whose kernels cover the same rows and columns shifted by one (the usual case for
 * a smooth predictor) are evaluated together: 4 × 5 image values read once for both.
 * @returns true when some value is NaN (kernel beyond the image).
 */
export function keysRow(img: Float32Array, width: number, height: number, y: number, hx: Float64Array, hy: Float64Array, s: number, out: Float32Array, o: number): boolean {
  const xmax = width - 2;
  const ymax = height - 2;
  let nan = false;
  for (let x = 0; x < width; x++) {
    const px = x + s * hx[x]!;
    const py = y + s * hy[x]!;
    if (!(px >= 1 && px < xmax && py >= 1 && py < ymax)) {
      const v = sampleKeys(img, width, height, px, py);
      out[o + x] = v;
      if (!(v === v)) nan = true;
      continue;
    }
    const ix = px | 0;
    const iy = py | 0;
    const t = px - ix;
    const u = py - iy;
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
    let k = ix - 1 + (iy - 1) * width;
    if (x + 1 < width) {
      const qx = x + 1 + s * hx[x + 1]!;
      const qy = y + s * hy[x + 1]!;
      if (qx >= 1 && qx < xmax && qy >= 1 && qy < ymax && (qx | 0) === ix + 1 && (qy | 0) === iy) {
        const tt = qx - ix - 1;
        const uu = qy - iy;
        const tt2 = tt * tt;
        const tt3 = tt2 * tt;
        const uu2 = uu * uu;
        const uu3 = uu2 * uu;
        const c0 = 0.5 * (-tt3 + 2 * tt2 - tt);
        const c1 = 0.5 * (3 * tt3 - 5 * tt2 + 2);
        const c2 = 0.5 * (-3 * tt3 + 4 * tt2 + tt);
        const c3 = 0.5 * (tt3 - tt2);
        const d0 = 0.5 * (-uu3 + 2 * uu2 - uu);
        const d1 = 0.5 * (3 * uu3 - 5 * uu2 + 2);
        const d2 = 0.5 * (-3 * uu3 + 4 * uu2 + uu);
        const d3 = 0.5 * (uu3 - uu2);
        let v0: number, v1: number, v2: number, v3: number, v4: number;
        let p: number, q: number;
        v0 = img[k]!;
        v1 = img[k + 1]!;
        v2 = img[k + 2]!;
        v3 = img[k + 3]!;
        v4 = img[k + 4]!;
        p = b0 * (a0 * v0 + a1 * v1 + a2 * v2 + a3 * v3);
        q = d0 * (c0 * v1 + c1 * v2 + c2 * v3 + c3 * v4);
        k += width;
        v0 = img[k]!;
        v1 = img[k + 1]!;
        v2 = img[k + 2]!;
        v3 = img[k + 3]!;
        v4 = img[k + 4]!;
        p += b1 * (a0 * v0 + a1 * v1 + a2 * v2 + a3 * v3);
        q += d1 * (c0 * v1 + c1 * v2 + c2 * v3 + c3 * v4);
        k += width;
        v0 = img[k]!;
        v1 = img[k + 1]!;
        v2 = img[k + 2]!;
        v3 = img[k + 3]!;
        v4 = img[k + 4]!;
        p += b2 * (a0 * v0 + a1 * v1 + a2 * v2 + a3 * v3);
        q += d2 * (c0 * v1 + c1 * v2 + c2 * v3 + c3 * v4);
        k += width;
        v0 = img[k]!;
        v1 = img[k + 1]!;
        v2 = img[k + 2]!;
        v3 = img[k + 3]!;
        v4 = img[k + 4]!;
        p += b3 * (a0 * v0 + a1 * v1 + a2 * v2 + a3 * v3);
        q += d3 * (c0 * v1 + c1 * v2 + c2 * v3 + c3 * v4);
        out[o + x] = p;
        out[o + x + 1] = q;
        x++;
        continue;
      }
    }
    let v = b0 * (a0 * img[k]! + a1 * img[k + 1]! + a2 * img[k + 2]! + a3 * img[k + 3]!);
    k += width;
    v += b1 * (a0 * img[k]! + a1 * img[k + 1]! + a2 * img[k + 2]! + a3 * img[k + 3]!);
    k += width;
    v += b2 * (a0 * img[k]! + a1 * img[k + 1]! + a2 * img[k + 2]! + a3 * img[k + 3]!);
    k += width;
    v += b3 * (a0 * img[k]! + a1 * img[k + 1]! + a2 * img[k + 2]! + a3 * img[k + 3]!);
    out[o + x] = v;
  }
  return nan;
}
