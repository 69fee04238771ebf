#!/usr/bin/env node
// Builds both packages to dist/: `tsc -b` over packages/cli (which references packages/core), then
// copies the files tsc does not (core's kernels.wasm) next to their compiled modules. Incremental:
// with nothing changed tsc only compares time stamps and the copy is skipped.
import { spawnSync } from 'node:child_process';
import { chmodSync, copyFileSync, mkdirSync, readFileSync, existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const require = createRequire(import.meta.url);
const tsc = require.resolve('typescript/bin/tsc');

const r = spawnSync(process.execPath, [tsc, '-b', path.join(root, 'packages/cli')], { stdio: 'inherit' });
if (r.status !== 0) process.exit(r.status ?? 1);

/** Files tsc does not emit, [from, to] relative to the repository root. */
const ASSETS = [['packages/core/src/correlate/kernels.wasm', 'packages/core/dist/correlate/kernels.wasm']];
for (const [from, to] of ASSETS) {
  const src = path.join(root, from);
  const dst = path.join(root, to);
  if (existsSync(dst) && readFileSync(dst).equals(readFileSync(src))) continue;
  mkdirSync(path.dirname(dst), { recursive: true });
  copyFileSync(src, dst);
}

// the command runs directly too (./packages/cli/dist/bin/rhofield.js); npm sets this on install anyway
chmodSync(path.join(root, 'packages/cli/dist/bin/rhofield.js'), 0o755);
