export type { Setup, FlowSpec } from './schema.js';
export { setupSchema } from './schema.js';
export { parseSetup, loadSetup, setupWarnings, jsonDepth, MAX_SETUP_BYTES, MAX_SETUP_DEPTH, FAR_DISTANCE_M } from './parseSetup.js';
