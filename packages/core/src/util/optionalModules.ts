/**
 * The heavy dependencies, loaded on first use instead of at import time: sharp (libvips, a native
 * addon) on the first image read or written, h5wasm (HDF5 compiled to WebAssembly, ~4 MB) on the first
 * HDF5 file. Importing the library or starting the CLI therefore costs neither. A dependency that
 * cannot load (e.g. sharp's native binary missing for this platform) is an error naming the package
 * and what needs it.
 */
import { createRequire } from 'node:module';
import type SharpDefault from 'sharp';
import { RhofieldError } from './errors.js';

type Sharp = typeof SharpDefault;
type H5wasm = (typeof import('h5wasm/node'))['default'];

let sharpModule: Promise<Sharp> | undefined;
let h5wasmModule: Promise<H5wasm> | undefined;

function cannotLoad(pkg: string, need: string, e: unknown): RhofieldError {
  const why = e instanceof Error ? e.message.split('\n')[0] : String(e);
  return new RhofieldError('processing', `cannot load ${pkg}, needed for ${need} (${why}); reinstall the dependencies (npm install / pnpm install)`);
}

/**
 * sharp's default export (loaded once). Through `require`, sharp's CommonJS build: it loads in about
 * 40 ms where its ES-module build takes about 75 ms (measured on a 2-core machine: the ES loader
 * resolves and links its many files one by one), and it is the same function. Nothing else in the
 * project loads sharp, so there is only this one instance.
 */
export function loadSharp(): Promise<Sharp> {
  sharpModule ??= new Promise<Sharp>((resolve) => resolve(createRequire(import.meta.url)('sharp') as Sharp)).catch((e: unknown) => {
    sharpModule = undefined;
    throw cannotLoad('sharp', 'reading and writing images', e);
  });
  return sharpModule;
}

/** h5wasm's Node build, ready to use (loaded once). */
export function loadH5wasm(): Promise<H5wasm> {
  h5wasmModule ??= import('h5wasm/node').then(
    async (m) => {
      await m.default.ready;
      return m.default;
    },
    (e: unknown) => {
      h5wasmModule = undefined;
      throw cannotLoad('h5wasm', 'writing HDF5 files', e);
    },
  );
  return h5wasmModule;
}
