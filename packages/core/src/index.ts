/**
 * rhofield — background-oriented schlieren from photographs to density.
 *
 * Conventions (docs/conventions.md): fields are {@link Field} (row-major, y down, pixel centres at integer
 * coordinates); displacement is measured minus reference, +x right, +y down, in pixels; SI units
 * elsewhere; NaN where there is no data.
 * @packageDocumentation
 */
export * from './util/index.js';
export * from './image/index.js';
export * from './diagnose/index.js';
export * from './correlate/index.js';
export * from './optics/index.js';
export * from './reconstruct/index.js';
export * from './views/index.js';
export * from './synth/index.js';
export * from './io/index.js';
export * from './setup/index.js';
export * from './plan/index.js';
export * from './batch/index.js';
