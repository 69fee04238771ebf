/**
 * `@rhofield/core/errors`: the error class, its helpers and the version, with no dependencies at all
 * (the CLI's start-up and `--help` use it). The same exports as in `@rhofield/core`, one module instance.
 * @packageDocumentation
 */
export type { ErrorKind } from './util/errors.js';
export { RhofieldError, invalidParameter, inputError } from './util/errors.js';
export { VERSION } from './util/version.js';
