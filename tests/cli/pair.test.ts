/**
 * `rhofield displacement` and `rhofield density` end to end through run(argv), on synthetic pairs made
 * by the project (known input displacement), plus every bad input the displacement issue lists.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import { createField, saveImage16, synthPair } from '@rhofield/core';
import { cli as runCli } from '../cliHarness.js';

const dir = mkdtempSync(path.join(os.tmpdir(), 'rhofield-cli-'));
const ref = path.join(dir, 'ref.png');
const meas = path.join(dir, 'meas.png');
const small = path.join(dir, 'small.png');
const tiny = path.join(dir, 'tiny.png');
const flat = path.join(dir, 'flat.png');
const truncated = path.join(dir, 'truncated.png');

const cli = (args: string[]) => runCli(...args);

beforeAll(async () => {
  const p = synthPair({ width: 192, height: 160, diameterPx: 2.8, dotsPerWindow: 10, seed: 5, bitDepth: 16, peak: 40000, displacement: { kind: 'uniform', dx: 1.37, dy: -0.62 } });
  await saveImage16(p.ref, ref);
  await saveImage16(p.meas, meas);
  const q = synthPair({ width: 128, height: 128, diameterPx: 2.8, seed: 6, bitDepth: 16, peak: 40000 });
  await saveImage16(q.ref, small);
  await saveImage16(synthPair({ width: 64, height: 64, diameterPx: 2.8, seed: 7, bitDepth: 16, peak: 40000 }).ref, tiny);
  await saveImage16(createField(192, 160, 1000), flat);
  writeFileSync(truncated, readFileSync(ref).subarray(0, 600));
});

describe('rhofield displacement REF MEAS --out DIR', () => {
  it('recovers a uniform (1.37, −0.62) px shift of a synthetic pair (known input) within 0.05 px and writes the files', async () => {
    const out = path.join(dir, 'ok');
    const r = await cli(['displacement', ref, meas, '--out', out, '--threads', '1', '--json']);
    expect(r.code, r.err).toBe(0);
    for (const f of ['displacement.csv', 'displacement.npy', 'displacement_magnitude.png', 'result.json']) expect(existsSync(path.join(out, f)), f).toBe(true);
    const csv = readFileSync(path.join(out, 'displacement.csv'), 'utf8').trim().split('\n');
    const head = csv[0]!.split(',');
    for (const c of ['x_px', 'y_px', 'dx_px', 'dy_px', 'peak_ratio', 'status']) expect(head).toContain(c);
    const ix = head.indexOf('dx_px');
    const iy = head.indexOf('dy_px');
    let largest = 0;
    for (const line of csv.slice(1)) {
      const v = line.split(',');
      expect(Math.abs(Number(v[ix]) - 1.37)).toBeLessThan(0.05);
      expect(Math.abs(Number(v[iy]) + 0.62)).toBeLessThan(0.05);
      largest = Math.max(largest, Math.hypot(Number(v[ix]), Number(v[iy])));
    }
    const res = JSON.parse(readFileSync(path.join(out, 'result.json'), 'utf8'));
    expect(res.inputs.reference.sha256).toMatch(/^[0-9a-f]{64}$/);
    // hashes (read while the measurement runs) against node:crypto on the whole file
    expect(res.inputs.reference.sha256).toBe(createHash('sha256').update(readFileSync(ref)).digest('hex'));
    expect(res.inputs.measurement.sha256).toBe(createHash('sha256').update(readFileSync(meas)).digest('hex'));
    // largest |d| over the grid (CSV values are float32 in shortest form: equal to ~1e-6 px)
    expect(res.displacement.maxMagnitudePx).toBeCloseTo(largest, 5);
    expect(res.settings.windowPx).toBe(32);
    // every setting with its default filled in (issue: provenance)
    expect(res.settings).toMatchObject({ stepPx: 16, passes: 3, interpolation: 'lanczos4', refine: 'direct', masked: false });
    expect(res.settings.medianTest).toMatchObject({ threshold: 2, epsilonPx: 0.1, keepPeakRatio: 3, keepCorrelation: 0.7 });
    expect(res.settings.schedule.at(-1)).toEqual({ windowPx: 32, stepPx: 16 });
    expect(res.version).toMatch(/^\d+\.\d+\.\d+$/);
    expect(res).toHaveProperty('gitCommit');
    expect(res.timingsSeconds.displacement).toBeGreaterThan(0);
    expect(JSON.parse(r.out).grid.cols).toBeGreaterThan(0);
    // npy header: float32, rows × cols × 2
    const npy = readFileSync(path.join(out, 'displacement.npy'));
    expect(npy.subarray(10, 120).toString('latin1')).toMatch(/'descr': '<f4'.*'shape': \(\d+, \d+, 2\)/);
  });

  it('--figure-width/--dpi size the figures for print (PNG width = mm/25.4·dpi); --dpi alone is a usage error', async () => {
    const out = path.join(dir, 'print');
    const r = await cli(['displacement', ref, meas, '--out', out, '--figure-width', '80', '--dpi', '300', '--format', 'png']);
    expect(r.code, r.err).toBe(0);
    const png = readFileSync(path.join(out, 'displacement_magnitude.png'));
    expect(png.readUInt32BE(16)).toBe(Math.round((80 / 25.4) * 300)); // IHDR width (PNG spec, ISO/IEC 15948)
    const bad = await cli(['displacement', ref, meas, '--out', path.join(dir, 'print2'), '--dpi', '300']);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/--dpi.*--figure-width/);
  });

  it('refuses to overwrite existing results without --force (exit 2), replaces them with --force', async () => {
    const out = path.join(dir, 'ok');
    const r = await cli(['displacement', ref, meas, '--out', out, '--threads', '1']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/already holds rhofield results.*--force/);
    const f = await cli(['displacement', ref, meas, '--out', out, '--threads', '1', '--force', '--quiet']);
    expect(f.code, f.err).toBe(0);
  });

  const bad: Array<[string, () => string[], RegExp]> = [
    ['images of different sizes', () => ['displacement', ref, small, '--out', path.join(dir, 'b1')], /differ in size.*192×160.*128×128/],
    ['a path that does not exist', () => ['displacement', ref, path.join(dir, 'nope.png'), '--out', path.join(dir, 'b2')], /nope\.png does not exist/],
    ['a truncated file', () => ['displacement', truncated, meas, '--out', path.join(dir, 'b3')], /truncated\.png/],
    ['a uniform image', () => ['displacement', flat, meas, '--out', path.join(dir, 'b4')], /texture/],
    ['a mask of the wrong size', () => ['displacement', ref, meas, '--mask', small, '--out', path.join(dir, 'b5')], /mask|128/],
    ['a window larger than the image', () => ['displacement', tiny, tiny, '--window', '128', '--passes', '1', '--out', path.join(dir, 'b6')], /window/i],
    ['step ≤ 0', () => ['displacement', ref, meas, '--step', '0', '--out', path.join(dir, 'b7')], /--step/],
    ['a window that is not a power of two', () => ['displacement', ref, meas, '--window', '24', '--out', path.join(dir, 'b8')], /--window/],
  ];
  for (const [what, args, msg] of bad) {
    it(`${what}: one-line message, exit 2, nothing written`, async () => {
      const a = args();
      const out = a[a.indexOf('--out') + 1]!;
      const r = await cli([...a, '--threads', '1']);
      expect(r.code, r.err).toBe(2);
      expect(r.err).toMatch(msg);
      expect(r.err.split('\n').filter((l) => l.startsWith('rhofield: error'))).toHaveLength(1);
      expect(r.err).not.toMatch(/\n\s+at /);
      expect(existsSync(out)).toBe(false);
      expect(readdirSync(dir).filter((f) => f.includes('rhofield-partial'))).toEqual([]);
    });
  }
});

describe('rhofield density REF MEAS --setup FILE --out DIR', () => {
  it('runs on the bundled demo pair: a hot (less dense) region below the reference density (physical sign: rays bend toward higher index)', async () => {
    const out = path.join(dir, 'demo');
    const r = await cli(['density', 'fixtures/demo/reference.png', 'fixtures/demo/measurement.png', '--setup', 'fixtures/demo/setup.json', '--out', out, '--threads', '1']);
    expect(r.code, r.err).toBe(0);
    const res = JSON.parse(readFileSync(path.join(out, 'result.json'), 'utf8'));
    // demo scene (scripts/make-demo.ts): ρ_ref 1.19 kg/m³, deficit 0.12 kg/m³ → minimum 1.07 kg/m³ (invented input)
    expect(res.density.minKgm3).toBeGreaterThan(1.07 - 0.12 * 0.05);
    expect(res.density.minKgm3).toBeLessThan(1.07 + 0.12 * 0.05);
    const head = readFileSync(path.join(out, 'density.csv'), 'utf8').split('\n')[0]!.split(',');
    for (const c of ['x_px', 'y_px', 'x_m', 'y_m', 'rho_kgm3', 'temperature_K']) expect(head).toContain(c);
  });

  it('a setup with an unknown key: one line naming the key, exit 2, nothing written', async () => {
    const setup = JSON.parse(readFileSync('fixtures/demo/setup.json', 'utf8'));
    setup.geometry.lensToBackgrund = 2;
    const f = path.join(dir, 'bad-setup.json');
    writeFileSync(f, JSON.stringify(setup));
    const out = path.join(dir, 'd2');
    const r = await cli(['density', ref, meas, '--setup', f, '--out', out]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/lensToBackgrund/);
    expect(existsSync(out)).toBe(false);
  });
});

describe('rhofield view KIND RESULT_DIR', () => {
  it('renders every kind from the demo density result, and rejects a bad kind / angle / folder with exit 2', async () => {
    const out = path.join(dir, 'demo');
    if (!existsSync(out)) {
      const r0 = await cli(['density', 'fixtures/demo/reference.png', 'fixtures/demo/measurement.png', '--setup', 'fixtures/demo/setup.json', '--out', out, '--threads', '1']);
      expect(r0.code, r0.err).toBe(0);
    }
    for (const k of ['knife-edge', 'colour', 'shadowgraph', 'contour']) {
      const r = await cli(['view', k, out]);
      expect(r.code, r.err).toBe(0);
    }
    expect(existsSync(path.join(out, 'view_colour.png'))).toBe(true);
    expect((await cli(['view', 'mirror', out])).code).toBe(2);
    expect((await cli(['view', 'knife-edge', out, '--angle', 'abc', '--force'])).err).toMatch(/--angle/);
    const empty = mkdtempSync(path.join(dir, 'empty-'));
    const r = await cli(['view', 'colour', empty]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/result\.json/);
  });

  it('a result folder missing files or from an incompatible version, and an unwritable output path: one line, exit 2', async () => {
    const out = path.join(dir, 'demo');
    if (!existsSync(out)) {
      const r0 = await cli(['density', 'fixtures/demo/reference.png', 'fixtures/demo/measurement.png', '--setup', 'fixtures/demo/setup.json', '--out', out, '--threads', '1']);
      expect(r0.code, r0.err).toBe(0);
    }
    const oneLine = (r: { code: number; err: string }, re: RegExp) => {
      expect(r.code).toBe(2);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).toMatch(re);
      expect(r.err).not.toMatch(/\n\s+at /);
    };
    const copy = mkdtempSync(path.join(dir, 'partial-'));
    for (const f of readdirSync(out)) if (f !== 'density_eps_x.npy' && !f.startsWith('view_')) writeFileSync(path.join(copy, f), readFileSync(path.join(out, f)));
    oneLine(await cli(['view', 'colour', copy]), /missing density_eps_x\.npy/);
    const old = mkdtempSync(path.join(dir, 'old-'));
    for (const f of readdirSync(out)) if (!f.startsWith('view_')) writeFileSync(path.join(old, f), readFileSync(path.join(out, f)));
    const res = JSON.parse(readFileSync(path.join(old, 'result.json'), 'utf8'));
    writeFileSync(path.join(old, 'result.json'), JSON.stringify({ ...res, version: '99.0.0' }));
    oneLine(await cli(['view', 'colour', old]), /incompatible version/);
    oneLine(await cli(['view', 'colour', out, '--out', path.join(dir, 'no-such-folder', 'v.png')]), /no-such-folder/);
    expect(existsSync(path.join(dir, 'no-such-folder'))).toBe(false);
  });
});
