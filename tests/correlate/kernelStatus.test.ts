/**
 * kernelStatus() says which displacement kernels run; the CLI warns only when the fast ones are
 * missing (tests/package/packedTarball.test.ts removes kernels.wasm from an installed copy), never
 * when RHOFIELD_KERNELS=js asks for the fallback, and result.json records the status.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { kernelStatus } from '@rhofield/core';

const root = path.resolve(import.meta.dirname, '../..');
const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-kernels-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('kernelStatus', () => {
  it('reports the WebAssembly SIMD kernels where kernels.wasm is present', () => {
    expect(kernelStatus()).toMatchObject({ simd: true, state: 'simd' });
  });

  it('RHOFIELD_KERNELS=js: the CLI runs the TypeScript kernels without a warning and records why in result.json', () => {
    const out = path.join(tmp, 'js');
    const r = spawnSync(
      process.execPath,
      [path.join(root, 'packages/cli/dist/bin/rhofield.js'), 'displacement', 'fixtures/demo/reference.png', 'fixtures/demo/measurement.png', '--out', out, '--quiet'],
      { cwd: root, encoding: 'utf8', env: { ...process.env, RHOFIELD_KERNELS: 'js' }, timeout: 100_000 },
    );
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toBe('');
    const res = JSON.parse(readFileSync(path.join(out, 'result.json'), 'utf8')) as { kernels: { simd: boolean; state: string; reason: string } };
    expect(res.kernels).toMatchObject({ simd: false, state: 'js-requested' });
    expect(res.kernels.reason).toMatch(/RHOFIELD_KERNELS=js/);
  });
});
