/**
 * The packages as a user outside the checkout gets them: both `pnpm pack` tarballs installed with plain
 * npm into an empty temporary folder (scripts/pack-local.mjs, the README's one command; the
 * third-party dependencies come from the npm registry, so this test needs that network). There the
 * command runs, the README's lab script runs as written with plain `node`, a strict TypeScript
 * consumer compiles against the shipped declarations, and a missing kernels file or worker module is
 * reported by name. Everything lives in the temporary folder, removed at the end.
 */
import { spawnSync, type SpawnSyncReturns } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PY_PRELUDE, runPython, skipWithoutPython } from '../io/python.js';

const root = path.resolve(import.meta.dirname, '../..');
const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-packed-'));
const app = path.join(tmp, 'app');
const coreDist = path.join(app, 'node_modules/@rhofield/core/dist');

/** The environment of the processes in the install: no pnpm/npm script settings from this run. */
const env = Object.fromEntries(Object.entries(process.env).filter(([k]) => !/^(npm|pnpm)_/i.test(k)));

function sh(cmd: string, args: string[], timeout = 120_000): SpawnSyncReturns<string> {
  return spawnSync(cmd, args, { cwd: app, env, encoding: 'utf8', timeout });
}

/** The ```js block of the README section "From a lab script". */
function readmeScript(): string {
  const readme = readFileSync(path.join(root, 'README.md'), 'utf8');
  const at = readme.indexOf('## From a lab script');
  const section = readme.slice(at, readme.indexOf('\n## ', at + 5));
  const m = /```js\n([\s\S]*?)```/.exec(section);
  if (at < 0 || !m?.[1]) throw new Error('README.md has no ```js block under "## From a lab script"');
  return m[1];
}

beforeAll(() => {
  const r = spawnSync(process.execPath, [path.join(root, 'scripts/pack-local.mjs'), app], { cwd: root, encoding: 'utf8', timeout: 400_000 });
  if (r.status !== 0) throw new Error(`pnpm pack:local failed (exit ${r.status}; it needs the npm registry):\n${r.stderr}\n${r.stdout}`);
  for (const f of ['reference.png', 'measurement.png', 'setup.json']) copyFileSync(path.join(root, 'fixtures/demo', f), path.join(app, f));
}, 420_000);
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('packed tarballs installed with plain npm outside the checkout', () => {
  it('installs only the shipped files: dist (with kernels.wasm), README, LICENSE; no sources, no tsx', () => {
    const pkg = JSON.parse(readFileSync(path.join(app, 'node_modules/@rhofield/core/package.json'), 'utf8')) as Record<string, unknown>;
    expect(JSON.stringify(pkg['exports'])).not.toContain('src/');
    expect(readdirSync(path.join(app, 'node_modules/@rhofield/core')).sort()).toEqual(['LICENSE', 'README.md', 'dist', 'package.json']);
    expect(existsSync(path.join(coreDist, 'correlate/kernels.wasm'))).toBe(true);
    expect(existsSync(path.join(app, 'node_modules/tsx'))).toBe(false);
    const cli = JSON.parse(readFileSync(path.join(app, 'node_modules/@rhofield/cli/package.json'), 'utf8')) as { dependencies: Record<string, string> };
    expect(cli.dependencies['@rhofield/core']).toBe('0.1.0'); // workspace:* rewritten by pnpm pack
  });

  it('npx rhofield --help runs the installed command', () => {
    const r = sh('npx', ['rhofield', '--help']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^Usage: rhofield /);
    expect(r.stdout).toMatch(/density \[options\] <ref> <meas>/);
  });

  it('the README lab script runs as written with plain node and writes an HDF5 file h5py reads', () => {
    writeFileSync(path.join(app, 'script.mjs'), readmeScript());
    const r = sh(process.execPath, ['script.mjs']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toBe(''); // the SIMD kernels are there: no warning
    const m = /density (\d+\.\d+) … (\d+\.\d+) kg\/m³ → demo\.h5/.exec(r.stdout);
    expect(m, r.stdout).not.toBeNull();
    const h5 = readFileSync(path.join(app, 'demo.h5'));
    // HDF5 format signature (HDF5 File Format Specification, "Format Signature"): \x89 H D F \r \n \x1a \n
    expect([...h5.subarray(0, 8)]).toEqual([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]);
    if (skipWithoutPython(['numpy', 'h5py'])) return;
    const h = runPython<{ shape: number[]; min: number; max: number; finite: number }>(
      PY_PRELUDE +
        `
import h5py
f = h5py.File(sys.argv[1], 'r')
names = []
f.visit(names.append)
a = np.asarray([f[n] for n in names if n.split('/')[-1] == 'rho'][0])
out({'shape': list(a.shape), 'min': float(np.nanmin(a)), 'max': float(np.nanmax(a)), 'finite': float(np.isfinite(a).mean())})`,
      [path.join(app, 'demo.h5')],
    );
    expect(h.shape).toEqual([29, 39]); // 32 px windows at 50 % overlap on the 640×480 demo pair
    expect(h.finite).toBeGreaterThan(0.9);
    // the file holds what the script computed (printed to 4 decimals)
    expect(h.min).toBeCloseTo(Number(m![1]), 3);
    expect(h.max).toBeCloseTo(Number(m![2]), 3);
    // The demo pair was rendered through a Gaussian density deficit of 0.12 kg/m^3 below 1.19 kg/m^3
    // (scripts/make-demo.ts, fixtures/demo/README.md; invented data): minimum within 0.01 of 1.07.
    expect(Math.abs(h.min - (1.19 - 0.12))).toBeLessThan(0.01);
    expect(h.max).toBeCloseTo(1.19, 2);
  });

  it('a strict TypeScript consumer (skipLibCheck: false, NodeNext) compiles against the shipped declarations', () => {
    const i = sh('npm', ['install', '--no-audit', '--no-fund', '--loglevel=error', '-D', '@types/node@20.19.43'], 200_000);
    expect(i.status, i.stderr).toBe(0);
    mkdirSync(path.join(app, 'ts'), { recursive: true });
    writeFileSync(
      path.join(app, 'ts/consumer.ts'),
      `import { loadImage, measureDisplacement, reconstructDensity, loadSetup, writeHdf5, densityFieldSet, kernelStatus, RhofieldError,
  type DisplacementResult, type KernelStatus, type Field } from '@rhofield/core';
import { planSetup, formatPlan, type Setup } from '@rhofield/core/setup';
import { run } from '@rhofield/cli';
export async function main(): Promise<number> {
  const setup: Setup = loadSetup('setup.json');
  const ref = await loadImage('reference.png');
  const d: DisplacementResult = await measureDisplacement(ref.field, ref.field, { windowPx: 32 });
  const rho: Field = reconstructDensity(d, setup).rho;
  const k: KernelStatus = kernelStatus();
  await writeHdf5('x.h5', densityFieldSet(reconstructDensity(d, setup), { xPx: d.grid.xPx, yPx: d.grid.yPx }));
  const e = new RhofieldError('input', 'x');
  return rho.width + (k.simd ? 0 : 1) + e.message.length + formatPlan(planSetup(setup)).length + (await run(['--version']));
}
`,
    );
    writeFileSync(
      path.join(app, 'ts/tsconfig.json'),
      JSON.stringify({
        compilerOptions: { strict: true, skipLibCheck: false, module: 'NodeNext', moduleResolution: 'NodeNext', target: 'ES2022', noEmit: true, types: ['node'] },
        include: ['consumer.ts'],
      }),
    );
    const r = sh(process.execPath, [path.join(root, 'node_modules/typescript/bin/tsc'), '-p', 'ts']);
    expect(r.status, r.stdout + r.stderr).toBe(0);
  });

  it('the installed command measures with worker threads started from the compiled worker module', () => {
    const r = sh('npx', ['rhofield', 'density', 'reference.png', 'measurement.png', '--setup', 'setup.json', '--threads', '2', '--out', 'run', '--quiet']);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toBe('');
    const res = JSON.parse(readFileSync(path.join(app, 'run/result.json'), 'utf8')) as {
      settings: { threads: number };
      kernels: { simd: boolean };
      gitCommit: string;
      density: { minKgm3: number };
    };
    expect(res.settings.threads).toBe(2);
    expect(res.kernels.simd).toBe(true);
    expect(res.gitCommit).toBe('unknown'); // an installed package has no checkout
    // the demo's Gaussian deficit of 0.12 kg/m^3 below 1.19 (scripts/make-demo.ts; invented data)
    expect(Math.abs(res.density.minKgm3 - 1.07)).toBeLessThan(0.01);
  });

  it('without kernels.wasm: one warning line naming the file, the run still completes, result.json records it', () => {
    const wasm = path.join(coreDist, 'correlate/kernels.wasm');
    renameSync(wasm, wasm + '.away');
    try {
      const r = sh('npx', ['rhofield', 'displacement', 'reference.png', 'measurement.png', '--out', 'no-wasm', '--quiet']);
      expect(r.status, r.stderr).toBe(0);
      const lines = r.stderr.trim().split('\n');
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(/^rhofield: warning: the WebAssembly kernels file .*\/correlate\/kernels\.wasm is missing: using the TypeScript kernels/);
      const res = JSON.parse(readFileSync(path.join(app, 'no-wasm/result.json'), 'utf8')) as { kernels: { simd: boolean; state: string } };
      expect(res.kernels).toMatchObject({ simd: false, state: 'wasm-missing' });
    } finally {
      renameSync(wasm + '.away', wasm);
    }
  });

  it('without the worker module: one error line naming it, exit 1, no output folder', () => {
    const worker = path.join(coreDist, 'correlate/correlate.worker.js');
    renameSync(worker, worker + '.away');
    try {
      const r = sh('npx', ['rhofield', 'displacement', 'reference.png', 'measurement.png', '--out', 'no-worker', '--threads', '2', '--quiet']);
      expect(r.status, r.stderr).toBe(1);
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(/^rhofield: error: cannot start a worker thread: its module .*\/correlate\/correlate\.worker\.js is missing/);
      expect(readdirSync(app).filter((f) => f.includes('no-worker'))).toEqual([]); // nor a staging folder
    } finally {
      renameSync(worker + '.away', worker);
    }
  });
});
