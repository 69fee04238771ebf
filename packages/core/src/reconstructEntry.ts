/**
 * `@rhofield/core/reconstruct`: density reconstruction from a measured displacement field (loaded by
 * the `rhofield density` command only when a setup asks for it). Also exported by `@rhofield/core`.
 * @packageDocumentation
 */
export * from './reconstruct/index.js';
