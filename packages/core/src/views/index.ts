export type { ScalarView, ColourView } from './types.js';
export { knifeEdge, knifeEdgeView } from './knifeEdge.js';
export { colourSchlieren, directionColour } from './colourSchlieren.js';
export { divergence, shadowgraphView } from './shadowgraph.js';
export { contourLines, contourView } from './marchingSquares.js';
export { viewFigure } from './viewFigure.js';
