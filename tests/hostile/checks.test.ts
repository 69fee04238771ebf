/**
 * The building blocks of the input checks, one by one: image integrity (PNG chunk CRC-32, TIFF strips
 * inside the file), the bracket-depth scan of setup files, setup warnings and derived optics, and the
 * CLI's translation of library names into option names and setup keys into "file: key".
 */
import { mkdtempSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { crc32 } from 'node:zlib';
import { describe, expect, it, vi } from 'vitest';
import { checkImageIntegrity, jsonDepth, loadImage, loadSetup, parseSetup, RhofieldError, saveImage16, saveImageStack16, setupWarnings } from '@rhofield/core';
import { reportError } from '../../packages/cli/src/common.js';
import { withOptionNames } from '../../packages/cli/src/optionNames.js';
import { withSetupFile } from '../../packages/cli/src/inputChecks.js';
import { png8, pngBadCrc, pngCrcOffset, tiffDirectoryFirst } from './damagedFiles.js';
import { BASE_SETUP } from './fuzzProperties.js';

const dir = mkdtempSync(path.join(os.tmpdir(), 'rf-checks-'));
const W = 40;
const H = 30;
const samples = Array.from({ length: W * H }, (_, i) => (i * 29 + 7) % 256);

async function verdict(bytes: Buffer, name: string): Promise<string> {
  const f = path.join(dir, name);
  writeFileSync(f, bytes);
  try {
    await checkImageIntegrity(f, statSync(f).size);
    return 'ok';
  } catch (e) {
    expect(e).toBeInstanceOf(RhofieldError);
    expect((e as RhofieldError).kind).toBe('input');
    expect((e as RhofieldError).message).toContain(f);
    return (e as RhofieldError).message;
  }
}

describe('PNG chunk checksums', () => {
  const good = png8(W, H, samples);
  it('zlib.crc32 agrees with the CRC-32 check value of the PNG specification ("123456789" → 0xCBF43926)', () => {
    // check value of the CRC-32 used by PNG (ISO 3309 / ITU-T V.42), as listed in the PNG specification's sample code
    expect(crc32(Buffer.from('123456789', 'latin1')) >>> 0).toBe(0xcbf43926);
  });
  it('a valid file passes, and still decodes', async () => {
    expect(await verdict(good, 'good.png')).toBe('ok');
    expect((await loadImage(path.join(dir, 'good.png'))).width).toBe(W);
  });
  it('a flipped bit in any chunk CRC is caught, naming the chunk', async () => {
    for (const t of ['IHDR', 'IDAT'] as const) expect(await verdict(pngBadCrc(good, t), `bad-${t}.png`)).toMatch(new RegExp(`damaged: checksum of PNG chunk ${t}`));
    const b = Buffer.from(good);
    b[pngCrcOffset(b, 'IEND')]! ^= 0x80;
    expect(await verdict(b, 'bad-IEND.png')).toMatch(/chunk IEND/);
  });
  it('a changed data byte is caught (the CRC no longer matches)', async () => {
    const b = Buffer.from(good);
    b[pngCrcOffset(b, 'IDAT') - 5]! ^= 0x10;
    expect(await verdict(b, 'data.png')).toMatch(/checksum of PNG chunk IDAT/);
  });
  it('a file cut anywhere after the signature is caught', async () => {
    for (const frac of [0.1, 0.5, 0.9, 0.999]) expect(await verdict(good.subarray(0, Math.floor(good.length * frac)), `cut${frac}.png`)).toMatch(/damaged: .*truncated/);
  });
  it('16-bit PNG written by the library passes', async () => {
    const f = path.join(dir, 'w16.png');
    await saveImage16({ width: W, height: H, data: Float32Array.from(samples, (v) => v * 200) }, f);
    expect(await verdict(readFileSync(f), 'w16-copy.png')).toBe('ok');
  });
});

describe('TIFF strips inside the file', () => {
  const tif = tiffDirectoryFirst(W, H, samples, 4);
  it('a directory-first TIFF passes and decodes to its samples', async () => {
    expect(await verdict(tif, 'good.tif')).toBe('ok');
    const img = await loadImage(path.join(dir, 'good.tif'));
    expect(Array.from(img.field.data.subarray(0, 5))).toEqual(samples.slice(0, 5));
  });
  it('cut to a third, or by one byte: caught, naming the strip', async () => {
    expect(await verdict(tif.subarray(0, Math.floor(tif.length / 3)), 'third.tif')).toMatch(/TIFF page 0 strip \d+ ends at byte \d+ but the file has \d+ bytes \(truncated\)/);
    expect(await verdict(tif.subarray(0, tif.length - 1), 'onebyte.tif')).toMatch(/strip 7 ends/);
  });
  it('the decoder alone accepts the cut file (zero-filled), the loader refuses it', async () => {
    const f = path.join(dir, 'third-load.tif');
    writeFileSync(f, tif.subarray(0, Math.floor(tif.length / 3)));
    await expect(loadImage(f)).rejects.toThrow(/third-load\.tif is damaged/);
  });
  it('multi-page stacks written by the library pass; a stack missing the end of its last page is refused', async () => {
    const f = path.join(dir, 'stack.tif');
    const page = (k: number) => ({ width: W, height: H, data: Float32Array.from(samples, (v) => v * 100 + k) });
    await saveImageStack16([page(0), page(1), page(2)], f);
    const bytes = readFileSync(f);
    expect(await verdict(bytes, 'stack-copy.tif')).toBe('ok');
    expect((await loadImage(path.join(dir, 'stack-copy.tif'), { page: 2 })).field.data[0]).toBe(samples[0]! * 100 + 2);
    for (const cut of [1, 100, Math.floor(bytes.length / 3)]) expect(await verdict(bytes.subarray(0, bytes.length - cut), `stack-cut${cut}.tif`)).toMatch(/damaged: TIFF page \d/);
  });
  it('a directory pointing past the end, and a looping page chain, are caught', async () => {
    const b = Buffer.from(tif);
    b.writeUInt32LE(b.length + 100, 4);
    expect(await verdict(b, 'ifd-out.tif')).toMatch(/directory lies past the end/);
    const loop = Buffer.from(tif);
    const n = loop.readUInt16LE(8);
    loop.writeUInt32LE(8, 8 + 2 + 12 * n);
    expect(await verdict(loop, 'loop.tif')).toMatch(/loops/);
  });
});

describe('setup files', () => {
  it('jsonDepth counts nesting outside strings only', () => {
    expect(jsonDepth('{}')).toBe(1);
    expect(jsonDepth('{"a": [1, {"b": []}]}')).toBe(4);
    expect(jsonDepth('{"a": "[[[[{{{{"}')).toBe(1);
    expect(jsonDepth('{"a": "\\"[[["}')).toBe(1);
    expect(jsonDepth('['.repeat(1e6), 32)).toBe(33);
    expect(jsonDepth(JSON.stringify(BASE_SETUP))).toBe(3);
  });
  it('a JSON syntax error is placed at its line and column, also when the parser does not say where', () => {
    const f = path.join(dir, 'tok.json');
    writeFileSync(f, '{\n  "camera": {\n    "focalLength": tru\n  }\n}\n');
    expect(() => loadSetup(f)).toThrow(/tok\.json is not valid JSON at line 3, column 23: Unexpected token line break/);
    writeFileSync(f, '{\n  "camera": {\n    "focalLength": 0.1 x\n  }\n}\n');
    expect(() => loadSetup(f)).toThrow(/at line 3, column 24: Expected ',' or '}' after property value/);
  });
  it('derived optics that overflow are refused naming the four keys', () => {
    const s = structuredClone(BASE_SETUP) as { geometry: { lensToBackground: number } };
    s.geometry.lensToBackground = 1e300;
    expect(() => parseSetup(s, 'rig.json')).toThrow(/^rig\.json: camera\.focalLength 0\.1, camera\.pixelPitch .* geometry\.lensToBackground 1e\+300 and geometry\.flowToBackground 0\.8 give .* not a finite positive number/);
  });
  it('warnings: distances beyond 1 km, origin outside the image; none for the lab setup', () => {
    const lab = parseSetup(BASE_SETUP, 'lab.json');
    expect(setupWarnings(lab, 'lab.json')).toEqual([]);
    const far = parseSetup({ ...BASE_SETUP, geometry: { lensToBackground: 1500, flowToBackground: 700 } }, 'far.json');
    expect(setupWarnings(far, 'far.json')).toEqual([expect.stringMatching(/^far\.json: geometry\.lensToBackground is 1500 m, beyond 1 km/)]);
    expect(setupWarnings(lab, 'lab.json', { width: 100, height: 100 })).toEqual([expect.stringMatching(/geometry\.originPx \[320, 240\] lies outside the 100×100 px image/)]);
    expect(setupWarnings(lab, 'lab.json', { width: 321, height: 241 })).toEqual([]);
  });
});

describe('names at the command line', () => {
  it('library parameter names become the options typed', () => {
    expect(withOptionNames('expected a power of two from 16 to 128 (px) for windowPx but received 12')).toBe('expected a power of two from 16 to 128 (px) for --window but received 12');
    expect(withOptionNames('expected one of npy, csv for format but received "xls"')).toContain('for --format but');
    expect(withOptionNames('flowFreeRegionPx [1, 2, 3, 4] contains no valid vector centre')).toBe('--flow-free [1, 2, 3, 4] contains no valid vector centre');
    // setup keys and ordinary words are left alone
    expect(withOptionNames('expected x for rig.json: flow.reference.rectPx but received 1')).toBe('expected x for rig.json: flow.reference.rectPx but received 1');
    expect(withOptionNames('the format of the file is unknown')).toBe('the format of the file is unknown');
  });
  it('file-system errors name the user\'s path, not the temporary file or the staging folder', () => {
    const lines: string[] = [];
    const spy = vi.spyOn(process.stderr, 'write').mockImplementation((s: string | Uint8Array) => (lines.push(String(s)), true));
    try {
      const errno = (code: string, p: string) => Object.assign(new Error(code), { code, path: p });
      expect(reportError(errno('ENOSPC', 'res/view.png.tmp-123-1700000000000'))).toBe(1);
      expect(reportError(errno('EROFS', '/data/.run7.rhofield-partial-4242-1700000000000/displacement.npy'))).toBe(2);
      expect(reportError(errno('EACCES', 'plain/file.png'))).toBe(2);
    } finally {
      spy.mockRestore();
    }
    expect(lines).toEqual([
      'rhofield: error: res/view.png could not be written: the disk is full; free space and rerun\n',
      'rhofield: error: /data/run7 could not be written: read-only file system; choose another --out\n',
      'rhofield: error: plain/file.png is not accessible; check permissions\n',
    ]);
  });
  it('setup keys get their file', () => {
    const e = withSetupFile(new RhofieldError('usage', 'expected [width, height] for camera.sensorPx but received nothing'), 'rig.json') as RhofieldError;
    expect(e.message).toBe('expected [width, height] for rig.json: camera.sensorPx but received nothing');
    const g = withSetupFile(new RhofieldError('usage', 'the planned maxDeflection is Infinity'), 'rig.json') as RhofieldError;
    expect(g.message).toBe('rig.json: the planned maxDeflection is Infinity');
    const io = new RhofieldError('input', 'a.png is damaged');
    expect(withSetupFile(io, 'rig.json')).toBe(io);
  });
});
