#!/usr/bin/python3
"""Plain numpy/scipy displacement script: the yardstick of `pnpm bench endToEndCli`.

What a researcher would write in an afternoon, kept vectorised (no Python loop over windows):

  1. read the reference and measurement PNG with Pillow, as float32;
  2. 32 px interrogation windows at 50 % overlap (16 px step), block of windows centred in the image;
  3. pass 1: mean-removed windows, batched float32 FFT cross-correlation (scipy.fft.rfft2 / irfft2,
     workers=2), normalised by sqrt(sum a^2 * sum b^2); integer peak plus three-point Gaussian
     sub-pixel fit in x and y (Willert & Gharib, Exp. Fluids 10:181-193, 1991);
  4. normalized median test on the 3x3 neighbourhood, threshold 2, epsilon 0.1 px (Westerweel &
     Scarano, Exp. Fluids 39:1096-1100, 2005); flagged vectors replaced by their neighbours' median;
  5. pass 2: the measurement window moved by the rounded pass-1 displacement (integer window offset,
     Westerweel, Dabiri & Gharib, Exp. Fluids 23:20-28, 1997), correlation again, displacement =
     offset + sub-pixel peak, median test and replacement again;
  6. write OUT/displacement.csv (x_px, y_px, dx_px, dy_px, peak, replaced) and OUT/displacement.npy
     (rows, cols, 2) float32.

Usage: /usr/bin/python3 numpy_reference.py REF.png MEAS.png OUTDIR
"""
import os
import sys

import numpy as np
import scipy.fft as sfft
from numpy.lib.stride_tricks import sliding_window_view
from PIL import Image

WIN = 32
STEP = 16
THRESHOLD = 2.0
EPS = 0.1
WORKERS = 2


def read_grey(path):
    with Image.open(path) as im:
        return np.asarray(im, dtype=np.float32)


def window_origins(n):
    count = (n - WIN) // STEP + 1
    first = (n - WIN - (count - 1) * STEP) // 2
    return first + STEP * np.arange(count)


def correlate(a, b):
    """a, b: (N, WIN, WIN) float32 windows. Returns (dx, dy, peak) of the correlation maximum."""
    a = a - a.mean(axis=(1, 2), keepdims=True)
    b = b - b.mean(axis=(1, 2), keepdims=True)
    fa = sfft.rfft2(a, workers=WORKERS)
    fb = sfft.rfft2(b, workers=WORKERS)
    c = sfft.irfft2(np.conj(fa) * fb, s=(WIN, WIN), workers=WORKERS)
    c = np.fft.fftshift(c, axes=(1, 2))  # lag 0 at (WIN/2, WIN/2)
    norm = np.sqrt((a * a).sum(axis=(1, 2)) * (b * b).sum(axis=(1, 2)))
    c /= np.where(norm > 0, norm, 1.0)[:, None, None].astype(np.float32)
    n = c.shape[0]
    flat = c.reshape(n, -1).argmax(axis=1)
    iy, ix = np.divmod(flat, WIN)
    # keep the peak one cell off the border so that both neighbours exist
    iy = np.clip(iy, 1, WIN - 2)
    ix = np.clip(ix, 1, WIN - 2)
    k = np.arange(n)
    tiny = np.float32(1e-6)
    c0 = np.log(np.maximum(c[k, iy, ix], tiny))
    cxm = np.log(np.maximum(c[k, iy, ix - 1], tiny))
    cxp = np.log(np.maximum(c[k, iy, ix + 1], tiny))
    cym = np.log(np.maximum(c[k, iy - 1, ix], tiny))
    cyp = np.log(np.maximum(c[k, iy + 1, ix], tiny))
    with np.errstate(divide='ignore', invalid='ignore'):
        sx = (cxm - cxp) / (2 * cxm - 4 * c0 + 2 * cxp)
        sy = (cym - cyp) / (2 * cym - 4 * c0 + 2 * cyp)
    sx = np.where(np.isfinite(sx), np.clip(sx, -0.5, 0.5), 0.0)
    sy = np.where(np.isfinite(sy), np.clip(sy, -0.5, 0.5), 0.0)
    dx = ix - WIN // 2 + sx
    dy = iy - WIN // 2 + sy
    return dx, dy, c[k, iy, ix]


def median_test(u, v):
    """Normalized median test (3x3, threshold 2, eps 0.1) with replacement by the neighbours' median.
    u, v: (rows, cols). Returns replaced u, v and the flag array."""
    def neighbours(f):
        p = np.pad(f, 1, constant_values=np.nan)
        r, c = f.shape
        return np.stack([p[1 + dr:1 + dr + r, 1 + dc:1 + dc + c]
                         for dr in (-1, 0, 1) for dc in (-1, 0, 1) if dr or dc])

    flags = np.zeros(u.shape, dtype=bool)
    medians = []
    for f in (u, v):
        nb = neighbours(f)
        med = np.nanmedian(nb, axis=0)
        res = np.nanmedian(np.abs(nb - med), axis=0)
        r = np.abs(f - med) / (res + EPS)
        flags |= r > THRESHOLD
        medians.append(med)
    u = np.where(flags, medians[0], u)
    v = np.where(flags, medians[1], v)
    return u, v, flags


def main():
    ref_path, meas_path, out_dir = sys.argv[1:4]
    ref = read_grey(ref_path)
    meas = read_grey(meas_path)
    if ref.shape != meas.shape:
        sys.exit(f'images differ in size: {ref.shape} vs {meas.shape}')
    h, w = ref.shape
    oy = window_origins(h)
    ox = window_origins(w)
    rows, cols = len(oy), len(ox)
    ref_win = sliding_window_view(ref, (WIN, WIN))
    meas_win = sliding_window_view(meas, (WIN, WIN))
    a = np.ascontiguousarray(ref_win[oy[:, None], ox[None, :]].reshape(-1, WIN, WIN))

    # pass 1: windows at the same place
    b = meas_win[oy[:, None], ox[None, :]].reshape(-1, WIN, WIN)
    dx, dy, _ = correlate(a, b)
    u, v, _ = median_test(dx.reshape(rows, cols), dy.reshape(rows, cols))

    # pass 2: measurement window moved by the rounded pass-1 displacement (kept inside the image)
    sx = np.rint(u).astype(np.int64)
    sy = np.rint(v).astype(np.int64)
    by = np.clip(oy[:, None] + sy, 0, h - WIN)
    bx = np.clip(ox[None, :] + sx, 0, w - WIN)
    b = meas_win[by, bx].reshape(-1, WIN, WIN)
    dx, dy, peak = correlate(a, b)
    u = (bx - ox[None, :]) + dx.reshape(rows, cols)
    v = (by - oy[:, None]) + dy.reshape(rows, cols)
    u, v, flags = median_test(u, v)

    os.makedirs(out_dir, exist_ok=True)
    xc = ox + (WIN - 1) / 2
    yc = oy + (WIN - 1) / 2
    xx, yy = np.meshgrid(xc, yc)
    table = np.column_stack([xx.ravel(), yy.ravel(), u.ravel(), v.ravel(), peak.ravel(), flags.ravel()])
    np.savetxt(os.path.join(out_dir, 'displacement.csv'), table, delimiter=',',
               fmt=['%.1f', '%.1f', '%.6f', '%.6f', '%.5f', '%d'],
               header='x_px,y_px,dx_px,dy_px,peak,replaced', comments='')
    np.save(os.path.join(out_dir, 'displacement.npy'), np.stack([u, v], axis=-1).astype(np.float32))


if __name__ == '__main__':
    main()
