/**
 * Memory and size guards: byte sizes as typed, the working-set estimate against the peak RSS of real
 * runs (child processes, getrusage maxRSS), the refusal of a 16000² pair under --max-memory 2GiB
 * before any pixel is decoded, and a 290k-vector run (640×480, window 16, step 1) that used to
 * overflow the stack at its end.
 */
import { spawnSync } from 'node:child_process';
import { copyFileSync, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { createRequire } from 'node:module';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CLI_PROCESS_BYTES, estimateMemory, formatBytes, parseByteSize, saveImage16, synthPair } from '@rhofield/core';
import { cli } from '../cliHarness.js';

type SharpLike = (input: unknown) => { greyscale(): { png(o: unknown): { toFile(f: string): Promise<unknown> } } };
// sharp is a dependency of @rhofield/core only (strict installs): resolve it from there.
const sharp = createRequire(new URL('../../packages/core/package.json', import.meta.url))('sharp') as SharpLike;

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const BIN = path.join(ROOT, 'packages/cli/dist/bin/rhofield.js');
/** Prints the process's peak RSS (kB, getrusage) on stderr at exit. */
const PEAK = 'data:text/javascript,process.on("exit",()=>process.stderr.write("peak-rss-kB "+process.resourceUsage().maxRSS+"\\n"))';

let dir: string;
beforeAll(async () => {
  dir = mkdtempSync(path.join(os.tmpdir(), 'rhofield-memory-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Run the CLI in a child process; exit code, stderr and the peak RSS in bytes. */
function runCli(args: string[]): { code: number | null; err: string; peakBytes: number } {
  const r = spawnSync(process.execPath, ['--import', PEAK, BIN].concat(args), { cwd: ROOT, encoding: 'utf8', timeout: 120_000 });
  const m = /peak-rss-kB (\d+)/.exec(r.stderr);
  return { code: r.status, err: r.stderr.replace(/peak-rss-kB \d+\n/, ''), peakBytes: m ? 1024 * Number(m[1]) : NaN };
}

describe('byte sizes', () => {
  it('parses binary and SI units and plain bytes (IEC 80000-13 prefixes)', () => {
    expect(parseByteSize('2GiB')).toBe(2 * 2 ** 30);
    expect(parseByteSize('512MiB')).toBe(512 * 2 ** 20);
    expect(parseByteSize('1.5GB')).toBe(1.5e9);
    expect(parseByteSize('800 MB')).toBe(8e8);
    expect(parseByteSize('1000000')).toBe(1e6);
    expect(parseByteSize('64k')).toBe(65536);
    for (const bad of ['', '0', '-1GB', '2 GiBs', 'lots', 'NaN', '1e9']) expect(() => parseByteSize(bad, '--max-memory')).toThrow(/--max-memory/);
    expect(formatBytes(1.5 * 2 ** 30)).toBe('1.50 GiB');
    expect(formatBytes(300 * 2 ** 20)).toBe('300 MiB');
  });

  it('a bad --max-memory is a usage error naming the option', async () => {
    const { ref, meas } = synthPair({ width: 64, height: 64, diameterPx: 2.8, seed: 1 });
    await saveImage16(ref, path.join(dir, 'a.png'));
    await saveImage16(meas, path.join(dir, 'b.png'));
    const r = await cli('displacement', path.join(dir, 'a.png'), path.join(dir, 'b.png'), '--out', path.join(dir, 'x'), '--max-memory', 'two gigs');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/^rhofield: error: .*2GiB, 512MiB, 1\.5GB.* for --max-memory but received "two gigs"\n$/);
    expect(existsSync(path.join(dir, 'x'))).toBe(false);
  });
});

describe('working-set estimate', () => {
  it('counts the buffers the code allocates: 22 bytes per pixel with one thread, 30 with worker threads (16-bit pair, default passes)', () => {
    // per pixel, counted from measureDisplacement and loadImage: two Float32 images (8), two 16-bit
    // decode buffers (4), the two deformed images (8), the binned pair of the coarse pass (2); worker
    // threads add the shared copies of both images (8)
    const a = estimateMemory({ width: 4096, height: 4096, threads: 1, processBytes: 0, outputs: false });
    const b = estimateMemory({ width: 8192, height: 8192, threads: 1, processBytes: 0, outputs: false });
    const perPixel = (b.parts.images + b.parts.engine - a.parts.images - a.parts.engine) / (8192 ** 2 - 4096 ** 2);
    expect(perPixel).toBe(22);
    if (os.availableParallelism() >= 2) {
      const c = estimateMemory({ width: 4096, height: 4096, threads: 2, processBytes: 0, outputs: false });
      expect((c.parts.images + c.parts.engine) / 4096 ** 2).toBe(30);
    }
    // vectors as windowGrid lays them: floor((size − window)/step) + 1 per axis
    expect(estimateMemory({ width: 640, height: 480, windowPx: 16, stepPx: 1 })).toMatchObject({ cols: 625, rows: 465, vectors: 290625 });
    expect(estimateMemory({ width: 16000, height: 16000 })).toMatchObject({ cols: 999, rows: 999 });
  });

  it('is within a factor 1.5 of the measured peak RSS of real runs (256² at step 2, 2048²)', async () => {
    const cases: { size: number; args: string[]; o: Parameters<typeof estimateMemory>[0] }[] = [
      { size: 256, args: ['--window', '16', '--step', '2', '--threads', '1'], o: { width: 256, height: 256, windowPx: 16, stepPx: 2, threads: 1 } },
      { size: 2048, args: ['--threads', '1'], o: { width: 2048, height: 2048, threads: 1 } },
    ];
    for (const c of cases) {
      const { ref, meas } = synthPair({ width: c.size, height: c.size, diameterPx: 2.8, seed: 7, displacement: { kind: 'uniform', dx: 1.3, dy: -0.4 } });
      const a = path.join(dir, `ref${c.size}.png`);
      const b = path.join(dir, `meas${c.size}.png`);
      await saveImage16(ref, a);
      await saveImage16(meas, b);
      const r = runCli(['displacement', a, b, '--out', path.join(dir, `out${c.size}`), '--quiet'].concat(c.args));
      expect(r.code, r.err).toBe(0);
      const e = estimateMemory(c.o);
      const ratio = e.bytes / r.peakBytes;
      expect(ratio, `${c.size}²: estimate ${formatBytes(e.bytes)}, measured ${formatBytes(r.peakBytes)}`).toBeGreaterThan(1 / 1.5);
      expect(ratio).toBeLessThan(1.5);
      // and the part beyond the process itself too (the pair's own memory), as the size grows
      if (c.size === 2048) expect((e.bytes - CLI_PROCESS_BYTES) / (r.peakBytes - CLI_PROCESS_BYTES)).toBeGreaterThan(1 / 1.5);
    }
  }, 120_000);
});

describe('memory guard', () => {
  it('a 16000² pair with --max-memory 2GiB is refused with exit 2 before decoding (peak RSS ≤ 300 MB), nothing written', async () => {
    // a flat 16000² PNG compresses to under 1 MB; only its header is read
    const a = path.join(dir, 'big-ref.png');
    const b = path.join(dir, 'big-meas.png');
    await sharp({ create: { width: 16000, height: 16000, channels: 3, background: { r: 40, g: 40, b: 40 } } }).greyscale().png({ compressionLevel: 9 }).toFile(a);
    copyFileSync(a, b);
    const out = path.join(dir, 'big-out');
    const before = readdirSync(dir).sort();
    const r = runCli(['displacement', a, b, '--out', out, '--max-memory', '2GiB']);
    expect(r.code).toBe(2);
    const lines = r.err.trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^rhofield: error: .*big-ref\.png and .*big-meas\.png \(16000×16000 px\): the estimated working set is [\d.]+ GiB .* above --max-memory 2GiB; crop the images \(to about \d+×\d+ px at these settings\).*raise --max-memory$/);
    // the crop it advises fits the budget
    const side = Number(/to about (\d+)×/.exec(lines[0]!)![1]);
    expect(estimateMemory({ width: side, height: side, bitDepth: 8 }).bytes).toBeLessThanOrEqual(2 * 2 ** 30);
    expect(estimateMemory({ width: side + 400, height: side + 400, bitDepth: 8 }).bytes).toBeGreaterThan(2 * 2 ** 30);
    expect(r.peakBytes).toBeLessThan(300e6);
    expect(existsSync(out)).toBe(false);
    expect(readdirSync(dir).sort()).toEqual(before);
    // density too, and the same pair fits when the budget allows it (the estimate, not the size, decides)
    const d = runCli(['density', a, b, '--setup', path.join(ROOT, 'fixtures/demo/setup.json'), '--out', out, '--max-memory', '1.5GB']);
    expect(d.code).toBe(2);
    expect(d.err).toMatch(/above --max-memory 1\.5GB/);
  }, 120_000);

  it('the default budget is half of this machine\'s memory, named in the refusal', async () => {
    const { ref, meas } = synthPair({ width: 64, height: 64, diameterPx: 2.8, seed: 1 });
    const a = path.join(dir, 'small-ref.png');
    const b = path.join(dir, 'small-meas.png');
    await saveImage16(ref, a);
    await saveImage16(meas, b);
    // a budget below the process itself refuses even a small pair; the message names the option as typed
    const r = await cli('displacement', a, b, '--out', path.join(dir, 'small-out'), '--max-memory', '100MiB');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--max-memory 100MiB is below the memory the program itself needs \(about [\d.]+ MiB\); raise --max-memory\n$/);
    expect(existsSync(path.join(dir, 'small-out'))).toBe(false);
    const help = spawnSync(process.execPath, [BIN, 'displacement', '--help'], { encoding: 'utf8' }).stdout;
    expect(help).toMatch(/--max-memory <size>/);
    expect(help.replace(/\s+/g, ' ')).toContain(`default 50% of this machine's memory, ${formatBytes(0.5 * os.totalmem())}`);
    const ok = await cli('displacement', a, b, '--out', path.join(dir, 'small-out'), '--quiet');
    expect(ok.code, ok.err).toBe(0);
  });

  it('batch refuses workers × pair above the budget, advising fewer --workers', async () => {
    const frames = path.join(dir, 'frames');
    const { ref, meas } = synthPair({ width: 256, height: 256, diameterPx: 2.8, seed: 2 });
    const { mkdirSync } = await import('node:fs');
    mkdirSync(frames);
    await saveImage16(ref, path.join(frames, 'f_000.png'));
    await saveImage16(meas, path.join(frames, 'f_001.png'));
    const r = await cli('batch', '--frames', path.join(frames, 'f_%03d.png'), '--out', path.join(dir, 'batch-out'), '--workers', '2', '--max-memory', '400MiB');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/2 worker\(s\) on pairs of 256×256 px.*above --max-memory 400MiB.*fewer --workers/);
    expect(existsSync(path.join(dir, 'batch-out', 'pairs'))).toBe(false);
  });
});

describe('large vector fields', () => {
  it('displacement --window 16 --step 1 on a 640×480 pair (290,625 vectors) completes with all default outputs', async () => {
    const { ref, meas } = synthPair({ width: 640, height: 480, diameterPx: 2.8, seed: 5, displacement: { kind: 'sine', amplitudePx: 1.5, wavelengthPx: 128, along: 'x', component: 'dy' } });
    const a = path.join(dir, 'ref640.png');
    const b = path.join(dir, 'meas640.png');
    await saveImage16(ref, a);
    await saveImage16(meas, b);
    const out = path.join(dir, 'out640');
    const r = runCli(['displacement', a, b, '--window', '16', '--step', '1', '--out', out, '--quiet']);
    expect(r.code, r.err).toBe(0);
    const res = JSON.parse(readFileSync(path.join(out, 'result.json'), 'utf8')) as { grid: { cols: number; rows: number }; displacement: { maxMagnitudePx: number } };
    expect(res.grid).toEqual({ cols: 625, rows: 465 });
    expect(Number.isFinite(res.displacement.maxMagnitudePx)).toBe(true);
    for (const f of ['displacement.npy', 'displacement.csv']) expect(existsSync(path.join(out, f))).toBe(true);
    // the estimate covers it (within the factor 1.5 of the estimate test)
    const e = estimateMemory({ width: 640, height: 480, windowPx: 16, stepPx: 1 });
    expect(e.bytes / r.peakBytes).toBeLessThan(1.5);
    expect(e.bytes / r.peakBytes).toBeGreaterThan(1 / 1.5);
  }, 120_000);
});

describe('--threads above the cores', () => {
  it('is capped at the cores with one warning on stderr, and the run uses the cores', async () => {
    const cores = os.availableParallelism();
    const asked = 64; // the most --threads accepts
    expect(cores).toBeLessThan(asked); // (a machine with 64 cores or more cannot show the cap this way)
    const { ref, meas } = synthPair({ width: 128, height: 128, diameterPx: 2.8, seed: 9, displacement: { kind: 'uniform', dx: 0.8, dy: 0.3 } });
    const a = path.join(dir, 'ref-t.png');
    const b = path.join(dir, 'meas-t.png');
    await saveImage16(ref, a);
    await saveImage16(meas, b);
    const out = path.join(dir, 'out-t');
    const r = await cli('displacement', a, b, '--threads', String(asked), '--out', out, '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(r.err).toBe(`rhofield: warning: --threads ${asked} exceeds the ${cores} core${cores === 1 ? '' : 's'}; using ${cores}\n`);
    const res = JSON.parse(readFileSync(path.join(out, 'result.json'), 'utf8')) as { settings: { threads: number }; warnings: string[] };
    expect(res.settings.threads).toBe(cores);
    expect(res.warnings).toEqual([]);
  });
});
