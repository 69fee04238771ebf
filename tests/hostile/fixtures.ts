/**
 * The files of the hostile-input corpus, all of our own making: a small random-dot pair (the
 * project's dot renderer), unrelated and blank images, damaged PNG/TIFF files, masks, setups (valid
 * and broken in many ways), a result folder and a batch folder with two shards for view and merge.
 */
import { cpSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { createField, encodeNpy, saveImage16, saveImage8, synthPair, type Field } from '@rhofield/core';
import { rhofield } from '../batch/cliHelpers.js';
import { writeSequence } from '../batch/synthFrames.js';
import { png8, pngBadCrc, tiffDirectoryFirst } from './damagedFiles.js';

type SharpLike = (input: unknown, opts?: unknown) => { webp(): { toFile(f: string): Promise<unknown> } };
// sharp is a dependency of @rhofield/core only (strict installs): resolve it from there.
const sharp = createRequire(new URL('../../packages/core/package.json', import.meta.url))('sharp') as SharpLike;

export const SIZE = 128;

/** A valid setup for SIZE² images (planar, reference at the top edge). */
export const SETUP = {
  camera: { focalLength: 0.1, fNumber: 11, pixelPitch: 5.5e-6, sensorPx: [SIZE, SIZE] },
  geometry: { lensToBackground: 2.0, flowToBackground: 0.8 },
  medium: { gas: 'air', wavelength: 5.3e-7, referenceDensity: 1.19, pressure: 101325 },
  flow: { type: 'planar', span: 0.06, reference: 'top' },
  expected: { densityChange: -0.05, lengthScale: 0.01 },
};
type SetupDoc = typeof SETUP;

function edited(f: (s: Record<string, Record<string, unknown>>) => void): SetupDoc {
  const s = structuredClone(SETUP) as unknown as Record<string, Record<string, unknown>>;
  f(s);
  return s as unknown as SetupDoc;
}

/** Setup files by name: JSON documents, or raw text where the text itself is the fault. */
export const SETUPS: Record<string, unknown> = {
  'setup.json': SETUP,
  'unknown-key.json': edited((s) => (s['camera']!['focalLenght'] = 0.1)),
  'bad-gas.json': edited((s) => (s['medium']!['gas'] = 'unobtainium')),
  'gas-case.json': edited((s) => (s['medium']!['gas'] = 'Air')),
  'negative.json': edited((s) => (s['geometry']!['lensToBackground'] = -2)),
  'zero-pitch.json': edited((s) => (s['camera']!['pixelPitch'] = 0)),
  'missing-key.json': edited((s) => delete s['geometry']!['flowToBackground']),
  'order.json': edited((s) => (s['geometry']!['flowToBackground'] = 2.5)),
  'far300.json': edited((s) => (s['geometry']!['lensToBackground'] = 1e300)),
  'two-media.json': edited((s) => (s['medium']!['gladstoneDale'] = 2.26e-4)),
  'mixture.json': edited((s) => {
    delete s['medium']!['gas'];
    s['medium']!['mixture'] = { air: 0.5, He: 0.4 };
  }),
  'mixture-name.json': edited((s) => {
    delete s['medium']!['gas'];
    s['medium']!['mixture'] = { air: 0.5, helium: 0.5 };
  }),
  'string-number.json': edited((s) => (s['camera']!['focalLength'] = '100mm')),
  'wavelength-nm.json': edited((s) => (s['medium']!['wavelength'] = 532)),
  'bad-flow.json': edited((s) => (s['flow'] = { type: 'conical' })),
  'array.json': [],
  'no-sensor.json': edited((s) => delete s['camera']!['sensorPx']),
  'no-expected.json': edited((s) => delete (s as Record<string, unknown>)['expected']),
  'plan-overflow.json': edited((s) => {
    s['flow']!['span'] = 1e300;
    s['expected']!['densityChange'] = 1e300;
  }),
  'km.json': edited((s) => {
    s['geometry']!['lensToBackground'] = 2500;
    s['geometry']!['flowToBackground'] = 1200;
  }),
  'origin-out.json': edited((s) => (s['geometry']!['originPx'] = [5000, -40])),
  'rect-outside.json': edited((s) => (s['flow']!['reference'] = { rectPx: [900, 900, 1000, 1000] })),
};
/** Setup files whose raw text is the fault. */
export const SETUP_TEXTS: Record<string, string> = {
  'not-json.json': '{ "camera": { "focalLength": 0.1, }\n',
  'deep.json': '['.repeat(100_000) + ']'.repeat(100_000),
  'deep40.json': '{"camera":' + '{"a":'.repeat(40) + '1' + '}'.repeat(41),
  'huge.json': JSON.stringify({ ...SETUP, notes: 'x'.repeat(1_100_000) }),
  'infinite.json': JSON.stringify(SETUP).replace('"lensToBackground":2', '"lensToBackground":1e400'),
  'empty.json': '',
};

function constant(v: number): Field {
  return createField(SIZE, SIZE, v);
}

function noise8(seed: number, w = SIZE, h = SIZE): number[] {
  let s = seed >>> 0;
  const out = new Array<number>(w * h);
  for (let i = 0; i < out.length; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    out[i] = s >>> 24;
  }
  return out;
}

/** Write every corpus file into `dir` (which must exist). */
export async function writeCorpusFiles(dir: string): Promise<void> {
  const at = (f: string) => path.join(dir, f);
  const { ref, meas } = synthPair({ width: SIZE, height: SIZE, diameterPx: 3, dotsPerWindow: 10, seed: 5, bitDepth: 16, noiseSigma: 200, displacement: { kind: 'uniform', dx: 1.3, dy: -0.7 } });
  await saveImage16(ref, at('ref.png'));
  await saveImage16(meas, at('meas.png'));
  const other = synthPair({ width: SIZE, height: SIZE, diameterPx: 3, dotsPerWindow: 10, seed: 9, bitDepth: 16, noiseSigma: 200 });
  await saveImage16(other.meas, at('other.png'));
  const small = synthPair({ width: 48, height: 48, diameterPx: 3, seed: 8, bitDepth: 16, displacement: { kind: 'uniform', dx: 0.5, dy: 0 } });
  await saveImage16(small.ref, at('small-ref.png'));
  await saveImage16(small.meas, at('small-meas.png'));
  const wide = synthPair({ width: SIZE + 32, height: SIZE, diameterPx: 3, seed: 6, bitDepth: 16 });
  await saveImage16(wide.ref, at('wide.png'));
  await saveImage16(constant(1000), at('flat.png'));
  writeFileSync(at('noise1.png'), png8(SIZE, SIZE, noise8(1)));
  writeFileSync(at('noise2.png'), png8(SIZE, SIZE, noise8(2)));
  const dots8 = Array.from(ref.data, (v) => Math.min(255, Math.round(v / 257)));
  const good = png8(SIZE, SIZE, dots8);
  writeFileSync(at('good8.png'), good);
  writeFileSync(at('bad-ihdr.png'), pngBadCrc(good, 'IHDR'));
  writeFileSync(at('bad-idat.png'), pngBadCrc(good, 'IDAT'));
  writeFileSync(at('cut.png'), good.subarray(0, Math.floor(good.length * 0.6)));
  const tif = tiffDirectoryFirst(SIZE, SIZE, dots8);
  writeFileSync(at('good.tif'), tif);
  writeFileSync(at('cut.tif'), tif.subarray(0, Math.floor(tif.length / 3)));
  writeFileSync(at('text.png'), 'hello, this is not an image\n');
  writeFileSync(at('empty.png'), '');
  mkdirSync(at('a-folder.png'));
  await sharp(Buffer.from(dots8.map((v) => v)), { raw: { width: SIZE, height: SIZE, channels: 1 } }).webp().toFile(at('pic.webp'));
  // masks: all zero, a 24×24 px square left (one window of 49: 2 %), the wrong size
  await saveImage8(constant(0), at('mask-zero.png'));
  const few = constant(0);
  for (let y = 52; y < 76; y++) for (let x = 52; x < 76; x++) few.data[x + y * SIZE] = 255;
  await saveImage8(few, at('mask-few.png'));
  await saveImage8(createField(64, 64, 255), at('mask-small.png'));
  for (const [name, doc] of Object.entries(SETUPS)) writeFileSync(at(name), JSON.stringify(doc, null, 2));
  for (const [name, text] of Object.entries(SETUP_TEXTS)) writeFileSync(at(name), text);

  // a result folder for view, and damaged copies of it
  const r = rhofield(['displacement', at('ref.png'), at('meas.png'), '--out', at('res'), '--format', 'npy', '--threads', '1', '--quiet']);
  if (r.code !== 0) throw new Error(`fixture result folder: ${r.stderr}`);
  cpSync(at('res'), at('res-nan'), { recursive: true });
  const rows = Number(JSON.parse(readFileSync(at('res/result.json'), 'utf8')).grid.rows);
  const cols = Number(JSON.parse(readFileSync(at('res/result.json'), 'utf8')).grid.cols);
  const nan = new Float32Array(rows * cols).fill(NaN);
  for (const f of ['displacement_dx.npy', 'displacement_dy.npy']) writeFileSync(at(`res-nan/${f}`), encodeNpy(nan, [rows, cols]));
  cpSync(at('res'), at('res-badjson'), { recursive: true });
  writeFileSync(at('res-badjson/result.json'), '{"tool": "rhofield", "vers');
  cpSync(at('res'), at('res-badnpy'), { recursive: true });
  writeFileSync(at('res-badnpy/displacement_dx.npy'), readFileSync(at('res/displacement_dx.npy')).subarray(0, 40));

  // a batch folder with two shards, and damaged copies
  const seq = await writeSequence(at('frames'), { size: 96, frames: 4, seed: 3 });
  for (const k of ['1/2', '2/2']) {
    const b = rhofield(['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', at('bat'), '--window', '32', '--passes', '1', '--format', 'npy', '--workers', '1', '--shard', k, '--quiet']);
    if (b.code !== 0) throw new Error(`fixture batch folder: ${b.stderr}`);
  }
  const shard1 = 'shards/1-of-2/partial.json';
  cpSync(at('bat'), at('bat-cut'), { recursive: true });
  writeFileSync(at(`bat-cut/${shard1}`), readFileSync(at(`bat/${shard1}`)).subarray(0, 30));
  cpSync(at('bat'), at('bat-empty'), { recursive: true });
  writeFileSync(at(`bat-empty/${shard1}`), '{}');
  cpSync(at('bat'), at('bat-missing'), { recursive: true });
  rmSync(at('bat-missing/shards/2-of-2'), { recursive: true });
  cpSync(at('bat'), at('bat-badacc'), { recursive: true });
  writeFileSync(at('bat-badacc/shards/1-of-2/dx_acc.npy'), 'garbage');
}
