export type { OpticalGeometry } from './geometry.js';
export {
  magnification,
  flowPlanePixelSize,
  deflectionPerPixel,
  displacementToDeflection,
  deflectionToDisplacement,
} from './geometry.js';
export {
  airRefractivityCiddorStandard,
  airRefractivityEdlen1966Standard,
  airRefractivityBirchDowns,
  standardAirDensityCiddor,
  airGladstoneDale,
} from './airRefractivity.js';
export type { GasProperties } from './gases.js';
export { UNIVERSAL_GAS_CONSTANT, KNOWN_GASES, gasProperties, gasGladstoneDale, gasConstantOf } from './gases.js';
export type { MediumSpec, MediumConstants } from './medium.js';
export { mediumConstants } from './medium.js';
export type { PixelMapping } from './pixelMapping.js';
export { pixelMapping } from './pixelMapping.js';
