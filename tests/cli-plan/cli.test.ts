import { afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, writeFileSync, readFileSync, existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { cli } from '../cliHarness.js';
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
      [['--width', '297mm', '--height', '210mm', '--dot', '0.6'], /unit.*--dot/],
      [['--width', '-3mm', '--height', '210mm', '--dot', '0.6mm'], /positive.*--width/],
      [['--width', '297mm', '--height', '210mm', '--dot', '0.6mm', '--fill', '-0.1'], /fill/],
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

/**
 * `rhofield check` on images written to disk. Ground truth: the independent test renderer
 * (tests/diagnose/renderTestDots.ts) draws Gaussian dots of known e⁻² diameter D = 4σ integrated over
 * pixels; the estimator fits the autocorrelation peak width (Adrian & Westerweel 2011 convention).
 */
async function writePng16(f: { width: number; height: number; data: Float32Array }, file: string): Promise<void> {
  const u16 = new Uint16Array(f.data.length);
  for (let i = 0; i < u16.length; i++) u16[i] = Math.max(0, Math.min(65535, Math.round(f.data[i]!)));
  await sharp(u16, { raw: { width: f.width, height: f.height, channels: 1 } }).toColourspace('grey16').png().toFile(file);
}

describe('rhofield check', () => {
  const ref = path.join(dir, 'ref.png');
  const dots = (D: number, seed: number, extra: Record<string, unknown> = {}) =>
    renderTestDots({ width: 192, height: 160, diameterPx: D, density: 0.4 / ((Math.PI * D * D) / 4), seed, noise: 200, background: 8000, peak: 20000, ...extra });
  beforeAll(async () => {
    await writePng16(dots(3, 8), ref);
    writeFileSync(path.join(dir, 'notimage.png'), 'this is not an image');
  });
  for (const D of [2, 3, 4, 5, 6]) {
    it(`--json: e⁻² dot image diameter of rendered ${D} px dots within 10 %, key containing "diameter" in px, exit 0`, async () => {
      const file = path.join(dir, `dots${D}.png`);
      await writePng16(dots(D, 30 + D), file);
      const r = await cli('check', file, '--json');
      expect(r.code, r.err).toBe(0);
      const j = JSON.parse(r.out);
      const key = Object.keys(j).find((k) => /diameter/i.test(k) && /px/i.test(k))!;
      expect(key).toBeDefined();
      expect(Math.abs(j[key] / D - 1), `${key} = ${j[key]} for D = ${D}`).toBeLessThan(0.1);
      expect(r.err).toMatch(/→/); // every finding carries an advice line
    });
  }
  it('a pair: global shift and weak-peak fraction from a real correlation pass, exit 0', async () => {
    const meas = path.join(dir, 'meas.png');
    await writePng16(dots(3, 8, { shiftX: 1.5, shiftY: -0.5 }), meas);
    const r = await cli('check', ref, meas, '--json', '--window', '32');
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    expect(Math.abs(j.shift.dxPx - 1.5)).toBeLessThan(0.1);
    expect(Math.abs(j.shift.dyPx + 0.5)).toBeLessThan(0.1);
    expect(j.weakPeakFraction).not.toBeNull();
    expect(j.weakPeakFraction).toBeLessThan(0.1);
  });
  it('1.5 px dots: a peak-locking warning with advice, still exit 0', async () => {
    const small = path.join(dir, 'small.png');
    await writePng16(dots(1.5, 12), small);
    const r = await cli('check', small);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(/warn.*peak locking/);
    expect(r.err).toMatch(/verdict: usable/);
  });
  it('a textureless image → exit 3 (unusable)', async () => {
    const flat = path.join(dir, 'flat.png');
    const f = renderTestDots({ width: 96, height: 96, diameterPx: 3, density: 0, seed: 1, noise: 2, background: 9000 });
    await writePng16(f, flat);
    const r = await cli('check', flat);
    expect(r.code).toBe(3);
    expect(r.err).toMatch(/UNUSABLE/);
  });
  it('usage errors → exit 2 with one line: not an image, missing file, --window outside 16–128 or not a power of two', async () => {
    const cases: string[][] = [
      [path.join(dir, 'notimage.png')],
      [path.join(dir, 'missing.png')],
      [ref, '--window', '8'],
      [ref, '--window', '256'],
      [ref, '--window', '24'],
      [ref, '--saturation', 'lots'],
    ];
    for (const args of cases) {
      const r = await cli('check', ...args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err.trim().split('\n').length, r.err).toBe(1);
    }
  });
  it('a 32-bit float TIFF (no defined grey scale) → exit 2', async () => {
    // minimal baseline TIFF (TIFF 6.0, Adobe 1992): little-endian, one strip, SampleFormat 3 = IEEE float
    const W = 16, H = 16, n = 10, ifd = 8, data = ifd + 2 + n * 12 + 4;
    const b = Buffer.alloc(data + W * H * 4);
    b.write('II', 0, 'latin1');
    b.writeUInt16LE(42, 2);
    b.writeUInt32LE(ifd, 4);
    b.writeUInt16LE(n, ifd);
    const tags: Array<[number, number, number]> = [
      [256, 3, W], [257, 3, H], [258, 3, 32], [259, 3, 1], [262, 3, 1],
      [273, 4, data], [277, 3, 1], [278, 3, H], [279, 4, W * H * 4], [339, 3, 3],
    ];
    tags.forEach(([tag, type, v], k) => {
      const o = ifd + 2 + 12 * k;
      b.writeUInt16LE(tag, o);
      b.writeUInt16LE(type, o + 2);
      b.writeUInt32LE(1, o + 4);
      if (type === 3) b.writeUInt16LE(v, o + 8);
      else b.writeUInt32LE(v, o + 8);
    });
    for (let i = 0; i < W * H; i++) b.writeFloatLE(((i * 7919) % 101) / 100, data + 4 * i);
    const tif = path.join(dir, 'float.tif');
    writeFileSync(tif, b);
    const r = await cli('check', tif);
    expect(r.code, r.err).toBe(2);
    expect(r.err).toMatch(/16-bit/);
    expect(r.err.trim().split('\n').length).toBe(1);
  });
});
