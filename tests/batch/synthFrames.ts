/**
 * Synthetic frame sequences for batch tests and the batch benchmark, from the project's dot
 * generator (core synth: generateDots/renderDots): a random-dot reference and frames whose dots are
 * moved by a known displacement (a shift that changes from frame to frame plus a smooth swirl),
 * written as 16-bit PNG files (saveImage16) or one multi-page TIFF stack (saveImageStack16).
 */
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { generateDots, renderDots, saveImage16, saveImageStack16, type DotSet, type Field } from '@rhofield/core';

export interface SequenceOptions {
  size: number;
  frames: number;
  seed?: number;
  /** Dots per pixel (default 0.04). */
  density?: number;
}

/** Displacement (px) applied to frame k at pixel (x, y): a shift that changes per frame plus a swirl. */
export function frameShift(k: number, x: number, y: number, size: number): [number, number] {
  const cx = (x - size / 2) / size;
  const cy = (y - size / 2) / size;
  const s = 1.5 * Math.exp(-8 * (cx * cx + cy * cy));
  return [0.6 + 0.05 * (k % 7) - s * cy, -0.3 + 0.04 * (k % 5) + s * cx];
}

const dotCache = new Map<string, DotSet>();
function dots(o: SequenceOptions): DotSet {
  const key = `${o.size}/${o.seed ?? 1}/${o.density ?? 0.04}`;
  let d = dotCache.get(key);
  if (!d) {
    d = generateDots({ width: o.size, height: o.size, diameterPx: 2.8, density: o.density ?? 0.04, seed: o.seed ?? 1, margin: 8 });
    dotCache.set(key, d);
  }
  return d;
}

/** Frame k's image (k = −1: the reference), 16-bit counts with a little noise. */
export function frameImage(k: number, o: SequenceOptions): Field {
  const common = { width: o.size, height: o.size, bitDepth: 16 as const, noiseSigma: 200, seed: 1000 + k };
  return k >= 0 ? renderDots(dots(o), { ...common, displacement: (x, y) => frameShift(k, x, y, o.size) }) : renderDots(dots(o), common);
}

/**
 * Write `dir/ref.png` and `dir/frame_00000.png` … (numbered from 0).
 * @returns the reference path and the numbered pattern of the frames.
 */
export async function writeSequence(dir: string, o: SequenceOptions): Promise<{ reference: string; pattern: string }> {
  mkdirSync(dir, { recursive: true });
  const reference = path.join(dir, 'ref.png');
  await saveImage16(frameImage(-1, o), reference);
  for (let k = 0; k < o.frames; k++) await saveImage16(frameImage(k, o), path.join(dir, `frame_${String(k).padStart(5, '0')}.png`));
  return { reference, pattern: path.join(dir, 'frame_%05d.png') };
}

/** Write one image of another size (a bad frame). */
export async function writeOddFrame(file: string, size: number): Promise<void> {
  await saveImage16(frameImage(-1, { size, frames: 1 }), file);
}

/** Write a multi-page 16-bit TIFF: page 0 the reference, pages 1… the frames. */
export async function writeStack(file: string, o: SequenceOptions): Promise<void> {
  const pages = [frameImage(-1, o)];
  for (let k = 0; k < o.frames; k++) pages.push(frameImage(k, o));
  await saveImageStack16(pages, file);
}
