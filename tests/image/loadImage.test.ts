import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import {
  loadImage,
  loadImageInfo,
  loadMask,
  RhofieldError,
  saveImage16,
  saveImage8,
  saveImageStack16,
  type Field,
} from '@rhofield/core';
import { writePng, writeTiff } from './rawFormats.js';

type SharpLike = (input: unknown, opts?: unknown) => {
  jpeg(o?: unknown): { toFile(f: string): Promise<unknown> };
  webp(): { toFile(f: string): Promise<unknown> };
};
// sharp is a dependency of @rhofield/core only (strict installs): resolve it from there.
const sharp = createRequire(new URL('../../packages/core/package.json', import.meta.url))('sharp') as SharpLike;

const dir = mkdtempSync(path.join(tmpdir(), 'rf-image-'));
const W = 37;
const H = 23;
const ramp16 = Array.from({ length: W * H }, (_, i) => (i * 2731 + 17) % 65536);
const ramp8 = Array.from({ length: W * H }, (_, i) => (i * 13 + 5) % 256);

async function inputFailure(p: Promise<unknown>, ...patterns: RegExp[]): Promise<string> {
  const e = await p.then(
    () => undefined,
    (err: unknown) => err,
  );
  expect(e, 'expected a RhofieldError').toBeInstanceOf(RhofieldError);
  const err = e as RhofieldError;
  expect(err.kind).toBe('input');
  expect(err.message.split('\n')).toHaveLength(1);
  for (const re of patterns) expect(err.message).toMatch(re);
  return err.message;
}

function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]! - b[i]!));
  return m;
}

describe('loadImage(path) reads files written by an independent PNG/TIFF writer', () => {
  it('16-bit grey PNG: native counts 0–65535, exact, bitDepth 16', async () => {
    const p = path.join(dir, 'g16.png');
    writePng(p, W, H, 16, 0, ramp16);
    const r = await loadImage(p);
    expect([r.width, r.height, r.bitDepth, r.format, r.pages, r.page]).toEqual([W, H, 16, 'png', 1, 0]);
    expect(r.field.width).toBe(W);
    expect(maxAbsDiff(r.field.data, ramp16)).toBe(0);
    // orientation: first stored row is row 0 (y down), pixel (x, y) at data[x + y * W]
    expect(r.field.data[5 + 7 * W]).toBe(ramp16[5 + 7 * W]);
  });

  it('8-bit grey PNG: native counts 0–255, exact, bitDepth 8', async () => {
    const p = path.join(dir, 'g8.png');
    writePng(p, W, H, 8, 0, ramp8);
    const r = await loadImage(p);
    expect([r.bitDepth, r.format]).toEqual([8, 'png']);
    expect(maxAbsDiff(r.field.data, ramp8)).toBe(0);
  });

  it('RGB PNG → luminance: grey pixels keep their value, primaries follow the sRGB luminance Y', async () => {
    // Check values: Y = 0.2126 R + 0.7152 G + 0.0722 B on linear-light sRGB, re-encoded with the sRGB
    // curve (IEC 61966-2-1:1999; ITU-R BT.709 primaries). Pure red → 0.2126 → 127.1 counts.
    const lin = (c: number) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
    const enc = (y: number) => 255 * (y <= 0.0031308 ? 12.92 * y : 1.055 * y ** (1 / 2.4) - 0.055);
    const px = [
      [255, 0, 0],
      [0, 255, 0],
      [0, 0, 255],
      [90, 90, 90],
      [200, 100, 50],
    ];
    const samples = px.flat();
    const p = path.join(dir, 'rgb.png');
    writePng(p, px.length, 1, 8, 2, samples);
    const r = await loadImage(p);
    expect(r.bitDepth).toBe(8);
    expect(r.field.data[3]).toBe(90);
    px.forEach(([R, G, B], i) => {
      const y = enc(0.2126 * lin(R! / 255) + 0.7152 * lin(G! / 255) + 0.0722 * lin(B! / 255));
      expect(Math.abs(r.field.data[i]! - y), `pixel ${i}: expected ${y.toFixed(1)}, got ${r.field.data[i]}`).toBeLessThanOrEqual(2);
    });
  });

  it('multi-page 16-bit TIFF: picks the page (0-based), reports the page count', async () => {
    const p = path.join(dir, 'stack.tif');
    const pages = [0, 1, 2].map((k) => ramp16.map((v) => (v + 1000 * k) % 65536));
    writeTiff(p, W, H, pages, 'u16');
    const info = await loadImageInfo(p);
    expect([info.width, info.height, info.pages, info.format, info.bitDepth]).toEqual([W, H, 3, 'tiff', 16]);
    const r = await loadImage(p, { page: 2 });
    expect(r.page).toBe(2);
    expect(maxAbsDiff(r.field.data, pages[2]!)).toBe(0);
    const r0 = await loadImage(p);
    expect(maxAbsDiff(r0.field.data, pages[0]!)).toBe(0);
    await inputFailure(loadImage(p, { page: 3 }), /stack\.tif/, /3 page\(s\)/, /page 3/);
  });

  it('JPEG (colour, lossy) loads as 8-bit grey near the written grey level', async () => {
    const p = path.join(dir, 'flat.jpg');
    const rgb = new Uint8Array(32 * 16 * 3).fill(120);
    await sharp(rgb, { raw: { width: 32, height: 16, channels: 3 } }).jpeg({ quality: 95 }).toFile(p);
    const r = await loadImage(p);
    expect([r.format, r.bitDepth, r.width, r.height]).toEqual(['jpeg', 8, 32, 16]);
    expect(maxAbsDiff(r.field.data, new Array(512).fill(120))).toBeLessThanOrEqual(2);
  });
});

describe('saveImage16/saveImage8/saveImageStack16 round trip through loadImage', () => {
  const f16: Field = { width: W, height: H, data: Float32Array.from(ramp16) };
  it('16-bit PNG and TIFF are exact', async () => {
    for (const name of ['s16.png', 's16.tif']) {
      const p = path.join(dir, name);
      await saveImage16(f16, p);
      const r = await loadImage(p);
      expect(r.bitDepth, name).toBe(16);
      expect(maxAbsDiff(r.field.data, ramp16), name).toBe(0);
    }
  });
  it('8-bit PNG is exact; values are rounded and clamped, NaN → 0', async () => {
    const p = path.join(dir, 's8.png');
    const data = Float32Array.from(ramp8);
    data[0] = NaN;
    data[1] = -5;
    data[2] = 300;
    data[3] = 10.6;
    await saveImage8({ width: W, height: H, data }, p);
    const r = await loadImage(p);
    expect(r.bitDepth).toBe(8);
    expect(Array.from(r.field.data.subarray(0, 4))).toEqual([0, 0, 255, 11]);
    expect(maxAbsDiff(r.field.data.subarray(4), ramp8.slice(4))).toBe(0);
  });
  it('a stack of three pages', async () => {
    const p = path.join(dir, 'st.tiff');
    const pages = [0, 1, 2].map((k) => ({ width: W, height: H, data: Float32Array.from(ramp16, (v) => (v + 7 * k) % 65536) }));
    await saveImageStack16(pages, p);
    expect((await loadImageInfo(p)).pages).toBe(3);
    expect(maxAbsDiff((await loadImage(p, { page: 1 })).field.data, pages[1]!.data)).toBe(0);
  });
  it('rejects an unknown extension', async () => {
    await expect(saveImage16(f16, path.join(dir, 'x.bmp'))).rejects.toThrow(/\.png, \.tif or \.tiff/);
  });
});

describe('loadImage errors: one line naming the file and the fix (kind input)', () => {
  beforeAll(() => {
    writePng(path.join(dir, 'good.png'), W, H, 16, 0, ramp16);
  });
  it('missing file', async () => {
    await inputFailure(loadImage(path.join(dir, 'nope.png')), /nope\.png/, /does not exist/);
  });
  it('empty file', async () => {
    const p = path.join(dir, 'empty.png');
    writeFileSync(p, '');
    await inputFailure(loadImage(p), /empty\.png/, /empty/);
  });
  it('truncated PNG', async () => {
    const whole = readFileSync(path.join(dir, 'good.png'));
    const p = path.join(dir, 'trunc.png');
    writeFileSync(p, whole.subarray(0, Math.floor(whole.length * 0.6)));
    await inputFailure(loadImage(p), /trunc\.png/, /damaged/, /truncated/);
  });
  it('not an image', async () => {
    const p = path.join(dir, 'text.png');
    writeFileSync(p, 'hello, not an image');
    await inputFailure(loadImage(p), /text\.png/, /not a readable image/);
  });
  it('unsupported format (WebP)', async () => {
    const p = path.join(dir, 'pic.webp');
    await sharp(new Uint8Array(16 * 16 * 3).fill(9), { raw: { width: 16, height: 16, channels: 3 } }).webp().toFile(p);
    await inputFailure(loadImage(p), /pic\.webp/, /webp/, /not supported/, /convert/);
  });
  it('32-bit float TIFF is rejected (scale undefined)', async () => {
    const p = path.join(dir, 'float.tif');
    writeTiff(p, 8, 4, [new Array(32).fill(0.25)], 'f32');
    await inputFailure(loadImage(p), /float\.tif/, /8- or 16-bit/);
  });
  it('page that is not a non-negative integer', async () => {
    await inputFailure(loadImage(path.join(dir, 'good.png'), { page: -1 }), /good\.png/, /1 page\(s\)/);
  });
});

describe('loadMask(path, {width, height})', () => {
  it('non-zero = use (1), zero = ignore (0)', async () => {
    const p = path.join(dir, 'mask.png');
    const m = Array.from({ length: W * H }, (_, i) => (i % 3 === 0 ? 0 : i % 3 === 1 ? 1 : 255));
    writePng(p, W, H, 8, 0, m);
    const mask = await loadMask(p, { width: W, height: H });
    expect(mask.data).toBeInstanceOf(Uint8Array);
    expect(Array.from(mask.data)).toEqual(m.map((v) => (v ? 1 : 0)));
  });
  it('wrong size names both sizes', async () => {
    const p = path.join(dir, 'mask.png');
    await inputFailure(loadMask(p, { width: 40, height: 23 }), /mask\.png/, /37×23/, /40×23/);
  });
});
