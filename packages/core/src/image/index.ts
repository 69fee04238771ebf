export { loadImage, loadImageInfo, MAX_IMAGE_PIXELS } from './loadImage.js';
export type { ImageFormat, ImageInfo, LoadedImage, LoadImageOptions } from './loadImage.js';
export { loadMask } from './loadMask.js';
export type { LoadMaskOptions } from './loadMask.js';
export { saveImage16, saveImage8, saveImageStack16 } from './saveImage.js';
export { checkImageIntegrity } from './checkIntegrity.js';
