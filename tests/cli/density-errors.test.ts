/**
 * Bad setups and setups that do not fit the images, through `rhofield density`: one line naming the
 * key and what is expected, exit code 2, and nothing written (the --out folder is not even created).
 */
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import { createField, saveImage8 } from '@rhofield/core';
import { run } from '../../packages/cli/src/main.js';

const dir = mkdtempSync(path.join(os.tmpdir(), 'rhofield-setup-errors-'));
const demo = JSON.parse(
  JSON.stringify({
    camera: { focalLength: 0.1, fNumber: 11, pixelPitch: 5.5e-6, sensorPx: [640, 480] },
    geometry: { lensToBackground: 2.0, flowToBackground: 0.8 },
    medium: { gas: 'air', wavelength: 5.3e-7, referenceDensity: 1.19, pressure: 101325 },
    flow: { type: 'planar', span: 0.06, reference: 'top' },
  }),
);
const topMasked = path.join(dir, 'mask-top.png');

beforeAll(async () => {
  // A mask (640×480 like the demo pair) that hides the top 64 rows: the 'top' reference edge of the
  // vector grid then has no vector.
  const m = createField(640, 480, 1);
  for (let y = 0; y < 64; y++) for (let x = 0; x < 640; x++) m.data[x + y * 640] = 0;
  for (let i = 0; i < m.data.length; i++) m.data[i] = m.data[i]! * 255;
  await saveImage8(m, topMasked);
});

async function density(setup: unknown, extra: string[] = []): Promise<{ code: number; err: string; out: string }> {
  const file = path.join(dir, `setup-${Math.random().toString(36).slice(2)}.json`);
  writeFileSync(file, JSON.stringify(setup));
  const out = path.join(dir, 'out-' + path.basename(file, '.json'));
  let err = '';
  const spy = vi.spyOn(process.stderr, 'write').mockImplementation((s: string | Uint8Array) => ((err += String(s)), true));
  try {
    const code = await run(['density', 'fixtures/demo/reference.png', 'fixtures/demo/measurement.png', '--setup', file, '--out', out, '--threads', '1', ...extra]);
    return { code, err, out };
  } finally {
    spy.mockRestore();
  }
}

function edit(f: (s: typeof demo) => void): typeof demo {
  const s = structuredClone(demo);
  f(s);
  return s;
}

const cases: [string, unknown, RegExp, string[]?][] = [
  ['a missing key', edit((s) => delete s.geometry.flowToBackground), /geometry\.flowToBackground/],
  ['an unknown key', edit((s) => (s.camera.focalLenght = 0.1)), /camera\.focalLenght/],
  ['a negative distance', edit((s) => (s.geometry.lensToBackground = -2)), /geometry\.lensToBackground/],
  ['a zero distance', edit((s) => (s.geometry.flowToBackground = 0)), /geometry\.flowToBackground/],
  ['flowToBackground ≥ lensToBackground', edit((s) => (s.geometry.flowToBackground = 2.5)), /flowToBackground/],
  ['a wavelength given in nm', edit((s) => (s.medium.wavelength = 532)), /medium\.wavelength/],
  ['an unknown gas', edit((s) => (s.medium.gas = 'unobtainium')), /medium\.gas/],
  ['an axis outside the image', edit((s) => (s.flow = { type: 'axisymmetric', axis: 'vertical', axisPosition: 900 })), /axis/],
  ['a reference edge that is entirely masked', demo, /reference|top/, ['--mask', topMasked]],
];

describe('rhofield density: bad setups (docs/setup.md)', () => {
  for (const [what, setup, re, extra] of cases) {
    it(`${what}: one line naming it, exit 2, nothing written`, async () => {
      const r = await density(setup, extra ?? []);
      expect(r.code, r.err).toBe(2);
      const lines = r.err.trim().split('\n').filter((l) => !l.startsWith('rhofield density:'));
      expect(lines, r.err).toHaveLength(1);
      expect(lines[0]).toMatch(/^rhofield: error: /);
      expect(lines[0]).toMatch(re);
      expect(r.err).not.toMatch(/\n\s+at /);
      expect(existsSync(r.out), 'output folder must not exist').toBe(false);
    });
  }
});
