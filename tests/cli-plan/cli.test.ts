import { afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, writeFileSync, readFileSync, existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import * as core from '@rhofield/core';
import { run } from '../../packages/cli/src/main.js';
import { renderTestDots } from '../diagnose/renderTestDots.js';

type SharpLike = (input: Uint8Array | Uint16Array, o?: unknown) => { toColourspace(s: string): { png(): { toFile(f: string): Promise<unknown> } } };
const sharp = createRequire(new URL('../../packages/core/package.json', import.meta.url))('sharp') as SharpLike;

const dir = mkdtempSync(path.join(tmpdir(), 'rhofield-cli-plan-'));
const setupFile = path.join(dir, 'setup.json');
writeFileSync(
  setupFile,
  JSON.stringify({
    camera: { focalLength: 0.105, fNumber: 11, pixelPitch: 6.5e-6, sensorPx: [2560, 2160] },
    geometry: { lensToBackground: 2.4, flowToBackground: 0.9 },
    medium: { gas: 'air', wavelength: 5.32e-7, referenceDensity: 1.18, pressure: 101325 },
    flow: { type: 'planar', span: 0.08, reference: 'top' },
    expected: { densityChange: -0.05, lengthScale: 0.01 },
  }),
);

/** Run the CLI in-process, capturing stdout and stderr. */
async function cli(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const o = vi.spyOn(process.stdout, 'write').mockImplementation((s: string | Uint8Array) => ((out += String(s)), true));
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((s: string | Uint8Array) => ((err += String(s)), true));
  process.exitCode = undefined;
  try {
    const code = await run(argv);
    return { code, out, err };
  } finally {
    o.mockRestore();
    e.mockRestore();
    process.exitCode = undefined;
  }
}
afterEach(() => vi.restoreAllMocks());

describe('rhofield plan', () => {
  it('--json prints the plan; the table goes to stderr', async () => {
    const r = await cli('plan', '--setup', setupFile, '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    // M = 0.105/2.295 (thin lens), displacement 0.4933 px (hand-worked in tests/plan)
    expect(j.magnification).toBeCloseTo(0.0457516, 6);
    expect(Math.abs(j.maxDisplacementPx - 0.493288)).toBeLessThan(2e-4);
    expect(j.noisePx).toBe(0.05);
    expect(r.err).toMatch(/max displacement/);
  });
  it('missing setup file → exit 2; --help carries the safety caution', async () => {
    expect((await cli('plan', '--setup', path.join(dir, 'none.json'))).code).toBe(2);
    const h = await cli('plan', '--help');
    expect(h.out + h.err).toMatch(/IEC 62471/);
  });
});

describe('rhofield pattern', () => {
  it('writes an SVG of the requested size; refuses to overwrite without --force', async () => {
    const out = path.join(dir, 'bg.svg');
    const r = await cli('pattern', '--width', '100mm', '--height', '8cm', '--dot', '1mm', '--fill', '0.35', '--seed', '4', '--out', out, '--json');
    expect(r.code).toBe(0);
    const svg = readFileSync(out, 'utf8');
    expect(svg).toMatch(/width="100mm" height="80mm" viewBox="0 0 100 80"/);
    expect(JSON.parse(r.out).dots).toBe((svg.match(/<circle /g) ?? []).length);
    expect((await cli('pattern', '--width', '100mm', '--height', '8cm', '--dot', '1mm', '--out', out)).code).toBe(2);
    expect((await cli('pattern', '--width', '100mm', '--height', '8cm', '--dot', '1mm', '--out', out, '--force')).code).toBe(0);
  });
  it('--setup picks the dot size (0.15 mm for the example setup: 2.5 px dot image)', async () => {
    const out = path.join(dir, 'fromsetup.pdf');
    const r = await cli('pattern', '--setup', setupFile, '--width', '60mm', '--height', '50mm', '--out', out, '--json');
    expect(r.code).toBe(0);
    expect(JSON.parse(r.out).dotDiameterM).toBeCloseTo(0.15e-3, 9);
    expect(readFileSync(out).subarray(0, 8).toString('latin1')).toBe('%PDF-1.4');
  });
  it('bad input → exit 2 with a one-line message, nothing written', async () => {
    const out = path.join(dir, 'bad.svg');
    const cases: Array<[string[], RegExp]> = [
      [['--width', '297', '--height', '210mm', '--dot', '0.6mm'], /unit/],
      [['--width', '-297mm', '--height', '210mm', '--dot', '0.6mm'], /positive/],
      [['--width', '297mm', '--height', '210mm', '--dot', '0.6mm', '--fill', '0.6'], /jam near 0\.55/],
      [['--width', '297mm', '--height', '210mm', '--dot', '0.6mm', '--fill', '0'], /fill/],
      [['--width', '3m', '--height', '210mm', '--dot', '0.6mm'], /page size/],
    ];
    for (const [args, msg] of cases) {
      const r = await cli('pattern', ...args, '--out', out);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err).toMatch(msg);
      expect(r.err.trim().split('\n').length).toBe(1);
    }
    const big = await cli('pattern', '--width', '1.5m', '--height', '1.5m', '--dot', '3mm', '--dpi', '600', '--out', path.join(dir, 'big.png'));
    expect(big.code).toBe(2);
    expect(big.err).toMatch(/megapixels/);
    expect(existsSync(out)).toBe(false);
  });
});

const hasLoader = typeof (core as unknown as Record<string, unknown>)['loadImage'] === 'function';

describe.skipIf(!hasLoader)('rhofield check (needs the image stage)', () => {
  const ref = path.join(dir, 'ref.png');
  beforeAll(async () => {
    const f = renderTestDots({ width: 160, height: 128, diameterPx: 3, density: 0.4 / ((Math.PI * 9) / 4), seed: 8, noise: 200, background: 8000, peak: 20000 });
    const u16 = new Uint16Array(f.data.length);
    for (let i = 0; i < u16.length; i++) u16[i] = Math.max(1, Math.min(65534, Math.round(f.data[i]!)));
    await sharp(u16, { raw: { width: f.width, height: f.height, channels: 1 } }).toColourspace('grey16').png().toFile(ref);
    writeFileSync(path.join(dir, 'notimage.png'), 'this is not an image');
  });
  it('--json reports the e⁻² dot image diameter (3 px rendered) within 10 %, exit 0', async () => {
    const r = await cli('check', ref, '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    const key = Object.keys(j).find((k) => /diameter/i.test(k))!;
    expect(Math.abs(j[key] / 3 - 1)).toBeLessThan(0.1);
  });
  it('a file that is not an image → exit 2', async () => {
    expect((await cli('check', path.join(dir, 'notimage.png'))).code).toBe(2);
  });
});
