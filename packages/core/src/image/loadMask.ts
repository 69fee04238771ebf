/**
 * Mask loading: any image the loader accepts; a pixel is used where its grey value is non-zero.
 */
import { inputError } from '../util/errors.js';
import type { MaskField } from '../util/field.js';
import { loadImage } from './loadImage.js';

/** Options of {@link loadMask}. */
export interface LoadMaskOptions {
  /** Required width (the image the mask belongs to), px. */
  readonly width: number;
  /** Required height, px. */
  readonly height: number;
  /** Page of a multi-page TIFF, 0-based (default 0). */
  readonly page?: number;
}

/**
 * Load a mask image: non-zero (after grey conversion) = use (1), zero = ignore (0).
 *
 * @param path mask file (PNG, TIFF, JPEG; 8 or 16 bit). Paint excluded regions black.
 * @param options the size the mask must have (that of the images it masks).
 * @returns a {@link MaskField} of 0/1 bytes.
 * @throws RhofieldError (input) naming the file and both sizes when the size differs, or any
 *   {@link loadImage} error.
 */
export async function loadMask(path: string, options: LoadMaskOptions): Promise<MaskField> {
  const { field } = await loadImage(path, options.page === undefined ? {} : { page: options.page });
  if (field.width !== options.width || field.height !== options.height) {
    throw inputError(
      `mask ${path} is ${field.width}×${field.height} px but the images are ${options.width}×${options.height} px; make the mask the same size as the images`,
    );
  }
  const out = new Uint8Array(field.data.length);
  for (let i = 0; i < out.length; i++) out[i] = field.data[i]! !== 0 ? 1 : 0;
  return { width: field.width, height: field.height, data: out };
}
