export type { Setup, FlowSpec } from './schema.js';
export { setupSchema } from './schema.js';
export { parseSetup, loadSetup } from './parseSetup.js';
