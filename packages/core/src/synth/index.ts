export {};
export type { DensityScene, PlanarGaussianOptions, AxisymmetricGaussianOptions, ObliqueShockOptions } from './density.js';
export { planarGaussianScene, axisymmetricGaussianScene, obliqueShockScene, obliqueShockAngle, obliqueShockDensityRatio } from './density.js';
export { sceneDisplacement, sceneBackgroundMask, sceneDensityOnGrid, sceneDisplacementOnGrid } from './density.js';
