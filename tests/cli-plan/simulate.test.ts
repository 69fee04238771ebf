import { afterEach, describe, expect, it, vi } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { loadImage, measureDisplacement } from '@rhofield/core';
import { cli } from '../cliHarness.js';

const dir = mkdtempSync(path.join(tmpdir(), 'rhofield-cli-simulate-'));
/**
 * Setup whose planner prediction is hand-worked in tests/plan/simulateChain.test.ts: peak displacement
 * d = M·Z_D·eps/p = 2.51895 px (thin lens, Richard & Raffel 2001), L = 32.6 px = 4.08 windows of 16 px
 * across 2L.
 */
const setup = {
  camera: { focalLength: 0.05, fNumber: 11, pixelPitch: 6.5e-6, sensorPx: [1280, 1024] },
  geometry: { lensToBackground: 1.5, flowToBackground: 0.5 },
  medium: { gas: 'air', wavelength: 5.32e-7, referenceDensity: 1.18, pressure: 101325 },
  flow: { type: 'planar', span: 0.2, reference: 'top' },
  expected: { densityChange: -0.1, lengthScale: 0.0041 },
};
const setupFile = path.join(dir, 'setup.json');
writeFileSync(setupFile, JSON.stringify(setup));
const noExpected = path.join(dir, 'noexpected.json');
writeFileSync(noExpected, JSON.stringify({ ...setup, expected: undefined }));

afterEach(() => vi.restoreAllMocks());

describe('rhofield simulate', () => {
  const out = path.join(dir, 'run1');
  it('--out writes 16-bit images and result.json; correlating those images gives the planned peak within 5 %', async () => {
    const r = await cli('simulate', '--setup', setupFile, '--field', 'gaussian', '--size', '192', '--window', '16', '--seed', '3', '--out', out, '--json');
    expect(r.code, r.err).toBe(0);
    expect(readdirSync(out).sort()).toEqual(['.rhofield-manifest.json', 'measurement.png', 'reference.png', 'result.json']);
    const j = JSON.parse(r.out);
    expect(JSON.parse(readFileSync(path.join(out, 'result.json'), 'utf8')).errors).toEqual(j.errors);
    expect(r.err).toMatch(/peak displacement/);
    const plan = JSON.parse((await cli('plan', '--setup', setupFile, '--json')).out);
    expect(Math.abs(plan.maxDisplacementPx - 2.51895)).toBeLessThan(2e-3);
    // independent of simulate's own bookkeeping: load the written PNGs and correlate them here
    const ref = await loadImage(path.join(out, 'reference.png'));
    const meas = await loadImage(path.join(out, 'measurement.png'));
    expect(ref.bitDepth).toBe(16);
    const d = await measureDisplacement(ref.field, meas.field, { windowPx: 16 });
    let peak = 0;
    for (let i = 0; i < d.dxPx.data.length; i++) {
      const m = Math.hypot(d.dxPx.data[i]!, d.dyPx.data[i]!);
      if (Number.isFinite(m)) peak = Math.max(peak, m);
    }
    expect(Math.abs(peak / plan.maxDisplacementPx - 1)).toBeLessThan(0.05);
    expect(Math.abs(j.errors.peakDisplacementMeasuredOverPlanned - 1)).toBeLessThan(0.05);
  });
  it('refuses to overwrite --out without --force; replaces it with --force', async () => {
    const again = await cli('simulate', '--setup', setupFile, '--field', 'gaussian', '--size', '128', '--out', out);
    expect(again.code).toBe(2);
    expect(again.err).toMatch(/--force/);
    expect(readdirSync(path.dirname(out)).filter((f) => f.includes('partial'))).toEqual([]);
    const forced = await cli('simulate', '--setup', setupFile, '--field', 'plume', '--size', '128', '--out', out, '--force', '--quiet');
    expect(forced.code, forced.err).toBe(0);
    expect(JSON.parse(readFileSync(path.join(out, 'result.json'), 'utf8')).field).toBe('plume');
  });
  it('shock: mask.png written, the planned column is n/a', async () => {
    const narrow = path.join(dir, 'narrow.json');
    writeFileSync(narrow, JSON.stringify({ ...setup, flow: { type: 'planar', span: 0.01, reference: 'left' } }));
    const o2 = path.join(dir, 'shock');
    const r = await cli('simulate', '--setup', narrow, '--field', 'shock', '--mach', '1.5', '--wedge', '5', '--size', '128', '--out', o2, '--json');
    expect(r.code, r.err).toBe(0);
    expect(existsSync(path.join(o2, 'mask.png'))).toBe(true);
    expect(JSON.parse(r.out).errors.peakDisplacementPlannedPx).toBeNull();
    expect(r.err).toMatch(/n\/a/);
  });
  it('usage errors → exit 2, one line naming the option, nothing written', async () => {
    mkdirSync(path.join(dir, 'empty'), { recursive: true });
    const cases: Array<[string[], RegExp]> = [
      [['--field', 'vortex'], /--field/],
      [['--field', 'gaussian', '--window', '24'], /--window/],
      [['--field', 'gaussian', '--window', '8'], /--window/],
      [['--field', 'gaussian', '--size', '32'], /--size/],
      [['--field', 'gaussian', '--size', '12abc'], /--size/],
      [['--field', 'gaussian', '--noise', '-1'], /--noise/],
      [['--field', 'gaussian', '--mach', '3'], /--mach/],
      // detachment at Mach 2, γ = 1.4: θmax ≈ 23.0° (NACA Report 1135, 1953, oblique-shock chart; value recalled from memory)
      [['--field', 'shock', '--wedge', '40'], /detachment angle 22\.9\d+° .*--wedge/],
    ];
    for (const [args, msg] of cases) {
      const o3 = path.join(dir, 'bad');
      const r = await cli('simulate', '--setup', setupFile, ...args, '--out', o3);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err, args.join(' ')).toMatch(msg);
      expect(r.err.trim().split('\n').length, r.err).toBe(1);
      expect(r.err).not.toMatch(/at .*\.ts:\d+/);
      expect(existsSync(o3)).toBe(false);
    }
    const missing = await cli('simulate', '--setup', path.join(dir, 'none.json'), '--field', 'gaussian');
    expect(missing.code).toBe(2);
    const noExp = await cli('simulate', '--setup', noExpected, '--field', 'gaussian');
    expect(noExp.code).toBe(2);
    expect(noExp.err).toMatch(/expected/);
  });
  it('--help documents the fields, exit codes and the safety caution', async () => {
    const h = await cli('simulate', '--help');
    const t = h.out + h.err;
    expect(t).toMatch(/gaussian, plume, shock/);
    expect(t).toMatch(/Exit codes/);
    expect(t).toMatch(/local codes/);
  });
});
