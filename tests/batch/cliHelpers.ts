/** Helpers for batch tests that run the real CLI as a child process. */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { decodeNpy } from '@rhofield/core';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
export const BIN = path.join(ROOT, 'packages/cli/dist/bin/rhofield.js');

/** Run `rhofield ARGS` to completion. */
export function rhofield(args: string[], env: Record<string, string> = {}): { code: number; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd: ROOT, encoding: 'utf8', env: { ...process.env, ...env }, timeout: 110_000 });
  return { code: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

/** Start `rhofield ARGS` in the background. */
export function rhofieldAsync(args: string[]) {
  return spawn(process.execPath, [BIN, ...args], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
}

export const loadNpy = (f: string) => decodeNpy(new Uint8Array(readFileSync(f)), f);

/** Largest relative difference |a−b| / max(|b|, floor) over two arrays; NaN must match NaN. */
export function maxRelDiff(a: ArrayLike<number>, b: ArrayLike<number>, floor = 1e-9): number {
  if (a.length !== b.length) return Infinity;
  let m = 0;
  for (let i = 0; i < a.length; i++) {
    const x = a[i]!;
    const y = b[i]!;
    if (Number.isNaN(x) || Number.isNaN(y)) {
      if (Number.isNaN(x) !== Number.isNaN(y)) return Infinity;
      continue;
    }
    m = Math.max(m, Math.abs(x - y) / Math.max(Math.abs(y), floor));
  }
  return m;
}

/** True when the real per-pair pipeline and its pool worker are in the tree (end-to-end tests need them). */
export const HAS_PIPELINE = existsSync(path.join(ROOT, 'packages/cli/src/pipeline.ts')) && existsSync(path.join(ROOT, 'packages/cli/src/batch/worker.ts'));
if (!HAS_PIPELINE) console.warn('tests/batch: end-to-end batch tests SKIPPED - packages/cli/src/pipeline.ts (the per-pair pipeline) is not in the tree yet');

export const STAT_FILES = ['displacement_mean', 'displacement_std', 'displacement_count'];
