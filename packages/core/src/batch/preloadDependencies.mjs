// Loads core's plain-JavaScript dependencies with Node's own loader, before the tsx loader is
// registered in a thread. Node keeps one module per URL, so the later imports of these packages from
// the TypeScript sources reuse these instances instead of sending them through tsx's transform.
//
// Why: tsx transforms ESM files from node_modules too, and h5wasm/node (a 4 MB Emscripten build)
// then costs about 2 s and 600 MB of resident memory per thread (measured: importing core's index
// through tsx gave RSS 957 MB, 4.1 s; with this preload 150 MB, about 2 s). Batch workers and the CLI
// entry call this first.
// Plain JS (not TypeScript) because it must run before tsx is registered.

/** The packages core imports that are plain JavaScript (see packages/core/package.json). */
export const NATIVE_DEPENDENCIES = ['h5wasm/node', 'sharp', 'd3-scale-chromatic', 'fft.js', 'ml-matrix', 'zod', 'piscina'];

/** Import every package of NATIVE_DEPENDENCIES natively (resolved from packages/core). */
export async function preloadDependencies() {
  await Promise.all(NATIVE_DEPENDENCIES.map((m) => import(m)));
}
