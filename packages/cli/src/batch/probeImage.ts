/**
 * Image header probe for batch planning: size and page count without decoding pixels.
 *
 * The CLI package has no direct dependency on sharp (pnpm installs are strict), so sharp is resolved
 * from @rhofield/core, which depends on it.
 */
import { createRequire } from 'node:module';
import { inputError } from '@rhofield/core';
import type { ImageProbe } from './types.js';

type SharpMeta = { width?: number; height?: number; pages?: number; pageHeight?: number };
type SharpFn = (file: string, opts?: Record<string, unknown>) => { metadata(): Promise<SharpMeta> };
let sharpFn: SharpFn | undefined;

function sharp(): SharpFn {
  if (!sharpFn) {
    const req = createRequire(import.meta.resolve('@rhofield/core'));
    sharpFn = req('sharp') as SharpFn;
  }
  return sharpFn;
}

/**
 * Width, height (of `page`, or of the first page) and page count of an image file.
 * @throws RhofieldError (input) naming the file if it is missing or not a readable image.
 */
export async function probeImage(file: string, page?: number): Promise<ImageProbe> {
  let meta: SharpMeta;
  try {
    meta = await sharp()(file, page === undefined ? {} : { page }).metadata();
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' || /missing|no such file/i.test((e as Error).message) ? 'does not exist' : `is not a readable image (${(e as Error).message.split('\n')[0]})`;
    throw inputError(`${file} ${why}; check the path`);
  }
  const pages = meta.pages ?? 1;
  if (page !== undefined && page >= pages) throw inputError(`${file} has ${pages} page(s) but page ${page} was asked for; check --range`);
  if (!meta.width || !meta.height) throw inputError(`${file} has no image size in its header; check the file`);
  return { width: meta.width, height: meta.pageHeight ?? meta.height, pages };
}
