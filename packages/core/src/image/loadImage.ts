/**
 * Image loading through sharp (libvips): 8- and 16-bit grey or colour PNG, TIFF (including
 * multi-page stacks) and JPEG into a float grey {@link Field} in the file's own counts.
 *
 * Choices (documented once, here):
 * - Values keep the file's native scale: 0–255 for 8-bit files, 0–65535 for 16-bit files; the
 *   result reports `bitDepth`. Nothing is normalised.
 * - Colour is converted to grey by libvips' `b-w` / `grey16` colourspace conversion, which takes the
 *   CIE luminance Y of the (sRGB) colour and re-encodes it with the sRGB transfer curve, so a pure
 *   grey pixel keeps its value exactly. An alpha channel is ignored.
 * - PNG files with 1, 2 or 4 bits per sample and palette PNGs are expanded by the decoder to 8-bit
 *   counts and reported as `bitDepth: 8`.
 * - 32-bit integer and floating-point samples (e.g. float TIFF) are rejected: their scale is not
 *   defined by the file; convert them to 16-bit or keep float data in `.npy`/HDF5.
 * - Accepted formats: PNG, TIFF, JPEG. Anything else sharp can read (WebP, GIF, …) is rejected so
 *   the counts are always those of a camera-style greyscale format.
 * - Pages are 0-based.
 * - Before decoding, {@link checkImageIntegrity} verifies PNG chunk checksums and that every TIFF
 *   strip or tile lies inside the file: the decoder accepts both kinds of damage silently.
 */
import { stat } from 'node:fs/promises';
import { loadSharp } from '../util/optionalModules.js';
import type { Metadata } from 'sharp';
import { inputError, RhofieldError } from '../util/errors.js';
import { checkImageIntegrity } from './checkIntegrity.js';
import type { Field } from '../util/field.js';

/** Image file formats the loader accepts. */
export type ImageFormat = 'png' | 'tiff' | 'jpeg';

/** Cheap metadata of an image file (header only, no pixel decoding). */
export interface ImageInfo {
  /** Columns of one page. */
  readonly width: number;
  /** Rows of one page. */
  readonly height: number;
  /** Number of pages (1 for PNG/JPEG, ≥ 1 for TIFF). */
  readonly pages: number;
  readonly format: ImageFormat;
  /** Bits per sample of the decoded counts: 8 or 16. */
  readonly bitDepth: 8 | 16;
  /** Channels stored in the file (1 grey, 2 grey+alpha, 3 RGB, 4 RGBA). */
  readonly channels: number;
}

/** A loaded image: grey counts in the file's native scale plus its metadata. */
export interface LoadedImage extends ImageInfo {
  /** Grey values, 0–255 (8-bit) or 0–65535 (16-bit), row-major, y down. */
  readonly field: Field;
  /** The page that was loaded (0-based). */
  readonly page: number;
}

/** Options of {@link loadImage}. */
export interface LoadImageOptions {
  /** Page of a multi-page TIFF, 0-based (default 0). */
  readonly page?: number;
  /**
   * Put the grey values in a SharedArrayBuffer (default false). Worker threads read such a field in
   * place: a multi-threaded `measureDisplacement` then copies nothing into its own shared
   * memory (saving a second full-size array and its first writes, about 50 ms per 2048² image).
   */
  readonly shared?: boolean;
}

const FORMATS: readonly string[] = ['png', 'tiff', 'jpeg'];

/** Largest page the loader decodes, px: libvips' default input limit (0x3FFF²), about 268 Mpx. */
export const MAX_IMAGE_PIXELS = 0x3fff * 0x3fff;

function firstLine(e: unknown): string {
  return String((e as Error)?.message ?? e).split('\n')[0]!.trim();
}

async function checkFile(path: string): Promise<number> {
  let size: number;
  try {
    const s = await stat(path);
    if (!s.isFile()) throw inputError(`${path} is not a file; give the path of an image file`);
    size = s.size;
  } catch (e) {
    if ((e as { kind?: string }).kind === 'input') throw e;
    throw inputError(`${path} does not exist; check the path`);
  }
  if (size === 0) throw inputError(`${path} is empty (0 bytes); re-export or copy the image again`);
  return size;
}

/**
 * Read the header of an image file: size of one page, page count, format and bit depth.
 *
 * @param path image file (PNG, TIFF, JPEG).
 * @returns {@link ImageInfo}.
 * @throws RhofieldError (input) naming the file when it is missing, empty, not an image, of an
 *   unsupported format or of a bit depth other than 8/16.
 */
export async function loadImageInfo(path: string): Promise<ImageInfo> {
  await checkFile(path);
  return headerInfo(path);
}

async function headerInfo(path: string): Promise<ImageInfo> {
  const sharp = await loadSharp();
  let m: Metadata;
  try {
    m = await sharp(path).metadata();
  } catch (e) {
    throw inputError(`${path} is not a readable image (${firstLine(e)}); give a PNG, TIFF or JPEG file`);
  }
  const format = String(m.format ?? 'unknown');
  if (!FORMATS.includes(format)) {
    throw inputError(`${path} is a ${format} image, which is not supported; convert it to PNG or TIFF (8- or 16-bit grey)`);
  }
  let bitDepth: 8 | 16;
  if (m.depth === 'uchar' || m.depth === 'char') bitDepth = 8;
  else if (m.depth === 'ushort' || m.depth === 'short') bitDepth = 16;
  else {
    throw inputError(
      `${path} has ${m.depth ?? 'unknown'} samples (${m.bitsPerSample ?? '?'} bits), expected 8- or 16-bit integer counts; convert it to a 16-bit TIFF/PNG (or keep float data in .npy)`,
    );
  }
  const width = m.width ?? 0;
  const pages = m.pages ?? 1;
  const height = m.pageHeight ?? m.height ?? 0;
  if (width <= 0 || height <= 0) throw inputError(`${path} has no pixels (${width}×${height}); check the file`);
  return { width, height, pages, format: format as ImageFormat, bitDepth, channels: m.channels ?? 1 };
}

/**
 * Load one page of an image file as grey counts in the file's native scale.
 *
 * @param path image file: 8/16-bit PNG, 8/16-bit TIFF (multi-page allowed), JPEG; colour → luminance.
 * @param options `page`: 0-based page of a multi-page TIFF (default 0); `shared`: values in shared memory.
 * @returns the grey {@link Field} (0–255 or 0–65535) with width, height, bitDepth, pages, format.
 * @throws RhofieldError (input), one line naming the file and the fix: missing, empty, truncated,
 *   damaged (PNG checksum, TIFF strip past the end) or unreadable file; unsupported format; bit depth other than 8/16; page out of range.
 * @example const { field, bitDepth } = await loadImage('ref.tif', { page: 3 });
 */
export async function loadImage(path: string, options: LoadImageOptions = {}): Promise<LoadedImage> {
  const size = await checkFile(path);
  // The integrity check reads the bytes on this thread while the decoder works on its own threads; a
  // damaged file is reported as damaged even when the decoder also fails (its message is vaguer).
  const integrity = checkImageIntegrity(path, size).then(
    () => null,
    (e: unknown) => (e instanceof RhofieldError ? e : inputError(`${path} could not be read (${firstLine(e)}); check the file and its permissions`)),
  );
  let img: LoadedImage;
  try {
    img = await decodeImage(path, options);
  } catch (e) {
    throw (await integrity) ?? e;
  }
  const damage = await integrity;
  if (damage) throw damage;
  return img;
}

async function decodeImage(path: string, options: LoadImageOptions): Promise<LoadedImage> {
  const info = await headerInfo(path);
  const page = options.page ?? 0;
  if (!Number.isInteger(page) || page < 0 || page >= info.pages) {
    throw inputError(
      `${path} has ${info.pages} page(s) (0-based: 0–${info.pages - 1}) but page ${page} was asked for; choose a page in that range`,
    );
  }
  const n = info.width * info.height;
  if (n > MAX_IMAGE_PIXELS) {
    throw inputError(`${path} claims ${info.width}×${info.height} px, more than the ${MAX_IMAGE_PIXELS} px the loader takes (the decoder's limit); crop the image, or check whether the header is damaged`);
  }
  const data = options.shared ? new Float32Array(new SharedArrayBuffer(4 * n)) : new Float32Array(n);
  const sharp = await loadSharp();
  try {
    let img = sharp(path, { page, failOn: 'truncated' });
    if (info.channels === 2 || info.channels === 4) img = img.removeAlpha();
    if (info.bitDepth === 16) {
      const { data: buf, info: out } = await img.toColourspace('grey16').raw({ depth: 'ushort' }).toBuffer({ resolveWithObject: true });
      if (out.channels !== 1 || buf.length !== 2 * n) throw new Error(`decoder gave ${out.channels} channel(s), ${buf.length} bytes`);
      const u16 = new Uint16Array(buf.buffer, buf.byteOffset, n);
      for (let i = 0; i < n; i++) data[i] = u16[i]!;
    } else {
      const { data: buf, info: out } = await img.toColourspace('b-w').raw().toBuffer({ resolveWithObject: true });
      if (out.channels !== 1 || buf.length !== n) throw new Error(`decoder gave ${out.channels} channel(s), ${buf.length} bytes`);
      for (let i = 0; i < n; i++) data[i] = buf[i]!;
    }
  } catch (e) {
    throw inputError(`${path} could not be decoded (${firstLine(e)}); the file is truncated or damaged, copy or export it again`);
  }
  return { ...info, page, field: { width: info.width, height: info.height, data } };
}
