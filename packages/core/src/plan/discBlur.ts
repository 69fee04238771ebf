/**
 * Average a field over a uniform disc (the defocus blur of the flow: the camera, focused on the
 * background, collects each background point through a cone that crosses the flow over a disc of
 * diameter (f/N)·Z_D/Z_B; the apparent displacement is the displacement field averaged over that
 * disc — geometric optics, thin lens). FFT convolution with zero padding; the edges are normalised by
 * the covered kernel weight (no darkening toward the border). Disc pixels are weighted by their area
 * inside the circle (4×4 supersampling).
 */
import type { Field } from '../util/field.js';
import { createFft2 } from '../diagnose/fft2.js';

/**
 * @param f input field (not modified).
 * @param diameterPx disc diameter, px; ≤ 1 returns a copy.
 * @returns the blurred field.
 */
export function discBlur(f: Field, diameterPx: number): Field {
  if (!(diameterPx > 1)) return { width: f.width, height: f.height, data: f.data.slice() };
  const R = diameterPx / 2;
  const r = Math.ceil(R);
  let n = 8;
  while (n < Math.max(f.width, f.height) + 2 * r + 1) n *= 2;
  const fft = createFft2(n);
  const k = new Float64Array(2 * n * n);
  for (let y = -r; y <= r; y++) {
    for (let x = -r; x <= r; x++) {
      let w = 0;
      for (let sy = 0; sy < 4; sy++) for (let sx = 0; sx < 4; sx++) {
        const px = x - 0.375 + sx * 0.25;
        const py = y - 0.375 + sy * 0.25;
        if (px * px + py * py <= R * R) w += 1 / 16;
      }
      k[2 * (((x + n) % n) + ((y + n) % n) * n)] = w;
    }
  }
  fft.run(k, false);
  const conv = (src: (x: number, y: number) => number): Float64Array => {
    const a = new Float64Array(2 * n * n);
    for (let y = 0; y < f.height; y++) for (let x = 0; x < f.width; x++) a[2 * (x + y * n)] = src(x, y);
    fft.run(a, false);
    for (let i = 0; i < n * n; i++) {
      const ar = a[2 * i]!, ai = a[2 * i + 1]!, kr = k[2 * i]!, ki = k[2 * i + 1]!;
      a[2 * i] = ar * kr - ai * ki;
      a[2 * i + 1] = ar * ki + ai * kr;
    }
    fft.run(a, true);
    return a;
  };
  const num = conv((x, y) => f.data[x + y * f.width]!);
  const den = conv(() => 1);
  const out = new Float32Array(f.width * f.height);
  for (let y = 0; y < f.height; y++) for (let x = 0; x < f.width; x++) {
    const i = 2 * (x + y * n);
    out[x + y * f.width] = num[i]! / den[i]!;
  }
  return { width: f.width, height: f.height, data: out };
}
