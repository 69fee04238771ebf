/**
 * Writing grey fields as 8- or 16-bit PNG/TIFF files (synthetic fixtures, exported views).
 *
 * Values are written as they are (no scaling): rounded to the nearest integer and clamped to the
 * format's range (0–255 or 0–65535); NaN is written as 0. The format follows the extension:
 * `.png`, `.tif`/`.tiff`. 16-bit grey round-trips exactly through {@link loadImage}.
 */
import { mkdir } from 'node:fs/promises';
import { dirname, extname } from 'node:path';
import { loadSharp } from '../util/optionalModules.js';
import type { TiffOptions } from 'sharp';
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';

function formatOf(path: string): 'png' | 'tiff' {
  const ext = extname(path).toLowerCase();
  if (ext === '.png') return 'png';
  if (ext === '.tif' || ext === '.tiff') return 'tiff';
  throw invalidParameter('image file name', 'a .png, .tif or .tiff extension', path);
}

function quantise(fields: readonly Field[], max: number): Uint16Array | Uint8Array {
  const n = fields.reduce((a, f) => a + f.data.length, 0);
  const out = max > 255 ? new Uint16Array(n) : new Uint8Array(n);
  let k = 0;
  for (const f of fields) {
    const d = f.data;
    for (let i = 0; i < d.length; i++) {
      const v = d[i]!;
      out[k++] = v >= 0 ? (v >= max ? max : Math.round(v)) : 0; // NaN and negatives → 0
    }
  }
  return out;
}

async function write(fields: readonly Field[], path: string, bits: 8 | 16): Promise<void> {
  const fmt = formatOf(path);
  const f0 = fields[0];
  if (!f0) throw invalidParameter('fields', 'at least one field', 0);
  for (const f of fields) {
    if (f.width !== f0.width || f.height !== f0.height || f.data.length !== f.width * f.height) {
      throw invalidParameter('fields', `fields of ${f0.width}×${f0.height}`, `${f.width}×${f.height}`);
    }
  }
  const pix = quantise(fields, bits === 16 ? 65535 : 255);
  const pages = fields.length;
  const raw = { width: f0.width, height: f0.height * pages, channels: 1 as const, ...(pages > 1 ? { pageHeight: f0.height } : {}) };
  const sharp = await loadSharp();
  let img = sharp(pix, { raw }).toColourspace(bits === 16 ? 'grey16' : 'b-w');
  await mkdir(dirname(path), { recursive: true });
  if (fmt === 'png') {
    if (pages > 1) throw invalidParameter('image file name', 'a .tif/.tiff name for a multi-page stack', path);
    await img.png().toFile(path);
  } else {
    // sharp's default TIFF compression is JPEG (lossy, 8-bit): always ask for lossless deflate.
    img = img.tiff({ compression: 'deflate', ...(pages > 1 ? { pageHeight: f0.height } : {}) } as TiffOptions);
    await img.toFile(path);
  }
}

/**
 * Write a field as a 16-bit grey PNG or TIFF (values rounded, clamped to 0–65535, NaN → 0).
 * @param field grey counts.
 * @param path `.png`, `.tif` or `.tiff`.
 * @throws RhofieldError (usage) for another extension.
 */
export function saveImage16(field: Field, path: string): Promise<void> {
  return write([field], path, 16);
}

/**
 * Write a field as an 8-bit grey PNG or TIFF (values rounded, clamped to 0–255, NaN → 0).
 * @param field grey counts.
 * @param path `.png`, `.tif` or `.tiff`.
 */
export function saveImage8(field: Field, path: string): Promise<void> {
  return write([field], path, 8);
}

/**
 * Write equally sized fields as one multi-page 16-bit grey TIFF (page k = `fields[k]`).
 * @param fields pages, all of one size.
 * @param path `.tif` or `.tiff`.
 */
export function saveImageStack16(fields: readonly Field[], path: string): Promise<void> {
  return write(fields, path, 16);
}
