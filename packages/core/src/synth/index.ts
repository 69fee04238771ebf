export {};
export type { PatternOptions, DotPattern } from './pattern.js';
export { generatePattern, parseLength, patternToSvg, patternToPdf, patternToPng, patternPngSize } from './pattern.js';
export { MAX_PNG_PIXELS, MAX_PAGE_SIDE, MAX_PATTERN_DOTS } from './pattern.js';
export type { DensityScene, PlanarGaussianOptions, AxisymmetricGaussianOptions, ObliqueShockOptions } from './density.js';
export { planarGaussianScene, axisymmetricGaussianScene, obliqueShockScene, obliqueShockAngle, obliqueShockDensityRatio } from './density.js';
export { sceneDisplacement, sceneBackgroundMask, sceneDensityOnGrid, sceneDisplacementOnGrid } from './density.js';
// synthetic dot images (dots.ts)
export type { GenerateDotsOptions, DotSet, DotDisplacement, RenderDotsOptions, SynthPairOptions } from './dots.js';
export { generateDots, renderDots, renderDotsUnquantised, synthPair, displacementFunction, erf } from './dots.js';
