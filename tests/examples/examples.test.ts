/**
 * The runnable examples in examples/ run here as a user would run them (a separate plain Node process,
 * against the built package: `pnpm test` builds first), and their output files are read back by an independent reader (h5py).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { PY_PRELUDE, runPython, skipWithoutPython } from '../io/python.js';

const root = path.resolve(import.meta.dirname, '../..');
const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-example-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('examples/one-pair-to-hdf5.mjs', () => {
  it.skipIf(skipWithoutPython(['numpy', 'h5py']))('processes the demo pair and writes an HDF5 file h5py reads: density in kg/m^3 with metre coordinates', () => {
    const out = path.join(tmp, 'demo.h5');
    const r = spawnSync(process.execPath, ['examples/one-pair-to-hdf5.mjs', 'fixtures/demo/reference.png', 'fixtures/demo/measurement.png', 'fixtures/demo/setup.json', out], {
      cwd: root,
      encoding: 'utf8',
      timeout: 110_000,
    });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain(`wrote ${out}`);
    const h = runPython<{ keys: string[]; rhoShape: number[]; rhoUnit: string; min: number; max: number; xUnit: string; xSpan: number }>(
      PY_PRELUDE +
        `
import h5py
f = h5py.File(sys.argv[1], 'r')
names = []
f.visit(names.append)
rho = [f[n] for n in names if n.split('/')[-1] == 'rho'][0]
x = [f[n] for n in names if n.split('/')[-1] == 'x_m'][0]
a = np.asarray(rho)
def unit(d):
    u = d.attrs.get('units', d.attrs.get('unit', ''))
    return u.decode() if isinstance(u, bytes) else str(u)
out({'keys': names, 'rhoShape': list(a.shape), 'rhoUnit': unit(rho), 'min': float(np.nanmin(a)), 'max': float(np.nanmax(a)),
     'xUnit': unit(x), 'xSpan': float(np.nanmax(x) - np.nanmin(x))})
`,
      [out],
    );
    // The demo pair was rendered through a Gaussian density deficit of 0.12 kg/m^3 below 1.19 kg/m^3
    // (scripts/make-demo.ts, fixtures/demo/README.md; invented data): the minimum must come back within
    // 0.01 kg/m^3 of 1.07 and the reference edge at 1.19.
    expect(h.rhoShape).toEqual([29, 39]);
    expect(h.rhoUnit).toMatch(/kg/);
    expect(h.min).toBeGreaterThan(1.19 - 0.12 - 0.01);
    expect(h.min).toBeLessThan(1.19 - 0.12 + 0.01);
    expect(h.max).toBeCloseTo(1.19, 2);
    expect(h.xUnit).toBe('m');
    expect(h.xSpan).toBeGreaterThan(0.01);
  });
});
