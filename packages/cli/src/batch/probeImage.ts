/**
 * Image header probe for batch planning: size and page count without decoding pixels
 * (core's loadImageInfo), plus a page-range check for stacks.
 */
import { inputError, loadImageInfo } from '@rhofield/core';
import type { ImageProbe } from './types.js';

/**
 * Width, height and page count of an image file; with `page`, also checks the page exists.
 * @throws RhofieldError (input) naming the file if it is missing, unreadable, or has too few pages.
 */
export async function probeImage(file: string, page?: number): Promise<ImageProbe> {
  const info = await loadImageInfo(file);
  if (page !== undefined && page >= info.pages) throw inputError(`${file} has ${info.pages} page(s) but page ${page} was asked for; check --range`);
  return { width: info.width, height: info.height, pages: info.pages };
}
