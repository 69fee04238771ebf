/**
 * Synthetic frame sequences for batch tests and the batch benchmark: a random-dot reference and
 * frames whose dots are moved by a known displacement (a uniform shift that changes from frame to
 * frame plus a smooth swirl), written as 16-bit PNG files (or one multi-page TIFF stack).
 * Dots are Gaussian spots (e⁻² diameter 2.8 px) placed with a seeded generator; the ground truth is
 * the generator's own input, which is all the batch tests need (they compare runs with each other).
 */
import { mkdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { createRng } from '@rhofield/core';

type SharpLike = (input: unknown, opts?: Record<string, unknown>) => {
  toColourspace(c: string): { png(): { toFile(f: string): Promise<unknown> }; tiff(o?: Record<string, unknown>): { toFile(f: string): Promise<unknown> } };
};
const sharp = createRequire(import.meta.resolve('@rhofield/core'))('sharp') as SharpLike;

export interface SequenceOptions {
  size: number;
  frames: number;
  seed?: number;
  /** Dots per pixel (default 0.06). */
  density?: number;
}

/** Displacement (px) applied to frame k at pixel (x, y). */
export function frameShift(k: number, x: number, y: number, size: number): [number, number] {
  const cx = (x - size / 2) / size;
  const cy = (y - size / 2) / size;
  const s = 1.5 * Math.exp(-8 * (cx * cx + cy * cy));
  return [0.6 + 0.05 * (k % 7) - s * cy, -0.3 + 0.04 * (k % 5) + s * cx];
}

/** Render dots at (xs, ys) into a 16-bit image. */
function render(size: number, xs: Float64Array, ys: Float64Array, amp: Float64Array): Uint16Array {
  const img = new Float64Array(size * size);
  const sigma = 0.7;
  const k = -1 / (2 * sigma * sigma);
  for (let d = 0; d < xs.length; d++) {
    const x0 = xs[d]!;
    const y0 = ys[d]!;
    const a = amp[d]!;
    for (let y = Math.max(0, Math.floor(y0 - 3)); y <= Math.min(size - 1, Math.ceil(y0 + 3)); y++) {
      const dy = y - y0;
      for (let x = Math.max(0, Math.floor(x0 - 3)); x <= Math.min(size - 1, Math.ceil(x0 + 3)); x++) {
        const dx = x - x0;
        img[x + y * size] = img[x + y * size]! + a * Math.exp(k * (dx * dx + dy * dy));
      }
    }
  }
  const out = new Uint16Array(size * size);
  for (let i = 0; i < out.length; i++) out[i] = Math.min(65535, Math.round(3000 + 40000 * img[i]!));
  return out;
}

function dots(size: number, seed: number, density: number) {
  const rng = createRng(seed);
  const n = Math.round(size * size * density);
  const xs = new Float64Array(n);
  const ys = new Float64Array(n);
  const amp = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    xs[i] = rng.next() * (size + 8) - 4;
    ys[i] = rng.next() * (size + 8) - 4;
    amp[i] = 0.6 + 0.4 * rng.next();
  }
  return { xs, ys, amp };
}

/** Frame k's image (k = −1: the reference). */
export function frameImage(k: number, o: SequenceOptions): Uint16Array {
  const { xs, ys, amp } = dots(o.size, o.seed ?? 1, o.density ?? 0.06);
  if (k >= 0) {
    const mx = new Float64Array(xs.length);
    const my = new Float64Array(ys.length);
    for (let i = 0; i < xs.length; i++) {
      const [dx, dy] = frameShift(k, xs[i]!, ys[i]!, o.size);
      mx[i] = xs[i]! + dx;
      my[i] = ys[i]! + dy;
    }
    return render(o.size, mx, my, amp);
  }
  return render(o.size, xs, ys, amp);
}

async function png(file: string, data: Uint16Array, size: number): Promise<void> {
  await sharp(data, { raw: { width: size, height: size, channels: 1 } }).toColourspace('grey16').png().toFile(file);
}

/**
 * Write `dir/ref.png` and `dir/frame_00000.png` … (numbered from 0).
 * @returns the reference path and the numbered pattern of the frames.
 */
export async function writeSequence(dir: string, o: SequenceOptions): Promise<{ reference: string; pattern: string }> {
  mkdirSync(dir, { recursive: true });
  const reference = path.join(dir, 'ref.png');
  await png(reference, frameImage(-1, o), o.size);
  for (let k = 0; k < o.frames; k++) await png(path.join(dir, `frame_${String(k).padStart(5, '0')}.png`), frameImage(k, o), o.size);
  return { reference, pattern: path.join(dir, 'frame_%05d.png') };
}

/** Write one image of another size (a bad frame). */
export async function writeOddFrame(file: string, size: number): Promise<void> {
  await png(file, frameImage(-1, { size, frames: 1 }), size);
}

/** Write a multi-page 16-bit TIFF of the first `pages` frames (the reference is page 0). */
export async function writeStack(file: string, o: SequenceOptions): Promise<void> {
  const pages = [frameImage(-1, o)];
  for (let k = 0; k < o.frames; k++) pages.push(frameImage(k, o));
  const all = new Uint16Array(o.size * o.size * pages.length);
  pages.forEach((p, i) => all.set(p, i * o.size * o.size));
  await sharp(all, { raw: { width: o.size, height: o.size * pages.length, channels: 1, pageHeight: o.size } } as Record<string, unknown>)
    .toColourspace('grey16')
    .tiff({ pageHeight: o.size } as Record<string, unknown>)
    .toFile(file);
}
