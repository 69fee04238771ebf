/**
 * Builds packages/core/src/correlate/kernels.wasm from kernels.wat with wabt (wat2wasm compiled to
 * JavaScript), without debug names, so the bytes depend only on the text and the wabt version.
 * `pnpm build:wasm` writes the file; `buildKernels()` is also used by the test that checks the
 * committed binary against its source.
 */
import { readFileSync, renameSync, writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import wabtInit from 'wabt';

export const watPath = fileURLToPath(new URL('../packages/core/src/correlate/kernels.wat', import.meta.url));
export const wasmPath = watPath.replace(/\.wat$/, '.wasm');

/** The binary of kernels.wat. */
export async function buildKernels() {
  const wabt = await wabtInit();
  const mod = wabt.parseWat('kernels.wat', readFileSync(watPath), { simd: true });
  try {
    mod.validate();
    return Buffer.from(mod.toBinary({ log: false, write_debug_names: false }).buffer);
  } finally {
    mod.destroy();
  }
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const bytes = await buildKernels();
  writeFileSync(wasmPath + '.tmp', bytes);
  renameSync(wasmPath + '.tmp', wasmPath);
  process.stderr.write(`wrote ${wasmPath} (${bytes.length} bytes)\n`);
}
