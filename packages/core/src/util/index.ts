export type { Field, MaskField } from './field.js';
export { createField, cloneField } from './field.js';
export type { ErrorKind } from './errors.js';
export { RhofieldError, invalidParameter, inputError } from './errors.js';
export type { Rng } from './rng.js';
export { createRng } from './rng.js';
export { VERSION } from './version.js';
export type { WorkerScript } from './workerScript.js';
export { siblingWorkerUrl, workerScript } from './workerScript.js';
