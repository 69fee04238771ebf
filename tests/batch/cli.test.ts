/**
 * `rhofield batch` / `rhofield merge` end to end, with the real per-pair pipeline on small synthetic
 * sequences (tests/batch/synthFrames.ts): kill -9 mid-run and rerun gives byte-identical statistics to
 * an uninterrupted run; bad input gives clear errors and exit codes; a full disk leaves no corrupted
 * pair folder.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it, vi } from 'vitest';
import { HAS_PIPELINE, STAT_FILES, loadNpy, rhofield, rhofieldAsync } from './cliHelpers.js';
import { frameShift, writeOddFrame, writeSequence, writeStack } from './synthFrames.js';

const base = mkdtempSync(path.join(os.tmpdir(), 'rf-batchcli-'));
let seq: { reference: string; pattern: string };
const opts = ['--window', '32', '--step', '16', '--passes', '1', '--format', 'npy'];
const N = 8;

beforeAll(async () => {
  if (!HAS_PIPELINE) return;
  seq = await writeSequence(path.join(base, 'frames'), { size: 128, frames: N, seed: 3 });
}, 60_000);

const statBytes = (out: string) => STAT_FILES.map((f) => readFileSync(path.join(out, `statistics/${f}.npy`)));

describe.skipIf(!HAS_PIPELINE)('rhofield batch (real pipeline)', () => {
  it('kill -9 mid-run, rerun: only unfinished pairs are redone and the statistics are byte-identical to an uninterrupted run', async () => {
    const full = path.join(base, 'full');
    const r0 = rhofield(['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', full, ...opts, '--workers', '1', '--json']);
    expect(r0.code, r0.stderr).toBe(0);
    const s0 = JSON.parse(r0.stdout);
    expect(s0).toMatchObject({ processed: N, failed: [] });
    expect(r0.stderr).toMatch(/pairs\/s with 1 worker/);

    const killed = path.join(base, 'killed');
    const child = rhofieldAsync(['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', killed, ...opts, '--workers', '2']);
    const finished = () => (existsSync(path.join(killed, 'pairs')) ? readdirSync(path.join(killed, 'pairs')).filter((n) => !n.startsWith('.')).length : 0);
    const deadline = Date.now() + 60_000;
    while (finished() < 2 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 10));
    child.kill('SIGKILL');
    await new Promise((r) => child.once('exit', r));
    const before = finished();
    expect(before, 'pairs finished before the kill').toBeGreaterThanOrEqual(2);
    expect(before, 'the kill came before the end').toBeLessThan(N);
    expect(existsSync(path.join(killed, 'statistics'))).toBe(false);

    const r1 = rhofield(['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', killed, ...opts, '--workers', '2', '--json']);
    expect(r1.code, r1.stderr).toBe(0);
    const s1 = JSON.parse(r1.stdout);
    expect(s1.skipped).toBe(before);
    expect(s1.processed).toBe(N - before);
    expect(readdirSync(path.join(killed, 'pairs')).filter((n) => n.startsWith('.'))).toEqual([]);
    const a = statBytes(full);
    const b = statBytes(killed);
    for (let i = 0; i < a.length; i++) expect(b[i]!.equals(a[i]!), `${STAT_FILES[i]} identical after kill and resume`).toBe(true);
    // the statistics are real: at every interior grid point the mean displacement equals the mean of
    // the displacements the frames were rendered with (synthFrames.frameShift: dots moved by a known
    // field), within 0.05 px RMS (common practice for correlation on synthetic dot images)
    const mean = loadNpy(path.join(full, 'statistics/displacement_mean.npy'));
    const count = loadNpy(path.join(full, 'statistics/displacement_count.npy'));
    const xs = loadNpy(path.join(full, 'statistics/statistics_x_px.npy')).data;
    const ys = loadNpy(path.join(full, 'statistics/statistics_y_px.npy')).data;
    expect(mean.shape).toEqual([ys.length, xs.length, 2]);
    let se = 0;
    let n = 0;
    for (let r = 0; r < ys.length; r++) {
      for (let c = 0; c < xs.length; c++) {
        const x = xs[c]!;
        const y = ys[r]!;
        if (x < 24 || y < 24 || x > 104 || y > 104) continue;
        expect(count.data[r * xs.length + c]).toBe(N);
        for (const comp of [0, 1]) {
          let want = 0;
          for (let k = 0; k < N; k++) want += frameShift(k, x, y, 128)[comp]! / N;
          se += (mean.data[(r * xs.length + c) * 2 + comp]! - want) ** 2;
          n++;
        }
      }
    }
    expect(n).toBeGreaterThan(20);
    expect(Math.sqrt(se / n), 'RMS error of the mean displacement, px').toBeLessThan(0.05);
  }, 120_000);

  it('a rerun with different settings is refused (exit 2); --force discards the old results', () => {
    const out = path.join(base, 'full');
    const r = rhofield(['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', out, '--window', '64', '--step', '32', '--passes', '1', '--range', '0:1']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/holds batch results made with other settings .*pass --force/);
    const f = rhofield(['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', out, '--window', '64', '--step', '32', '--passes', '1', '--range', '0:1', '--force', '--quiet']);
    expect(f.code, f.stderr).toBe(0);
    expect(readdirSync(path.join(out, 'pairs')).sort()).toEqual(['frame_00000', 'frame_00001']);
  }, 60_000);

  it('an odd-sized frame is failed and reported; the rest go on; exit code 1 with the list', async () => {
    const dir = path.join(base, 'odd');
    const s = await writeSequence(dir, { size: 128, frames: 3, seed: 9 });
    await writeOddFrame(path.join(dir, 'frame_00003.png'), 96);
    const r = rhofield(['batch', '--reference', s.reference, '--frames', s.pattern, '--out', path.join(base, 'odd-out'), ...opts, '--workers', '1']);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/1 pair\(s\) failed/);
    expect(r.stderr).toMatch(/frame_00003: .*frame_00003.png is 96×96 px but this run's frames are 128×128 px/);
    expect(JSON.parse(readFileSync(path.join(base, 'odd-out/statistics/statistics.json'), 'utf8')).pairsUsed).toBe(3);
  }, 60_000);

  it('a multi-page TIFF stack with consecutive pairing and --range', async () => {
    const stack = path.join(base, 'stack.tif');
    await writeStack(stack, { size: 128, frames: 4, seed: 2 });
    const r = rhofield(['batch', '--frames', stack, '--pairing', 'consecutive', '--range', '1:4', '--out', path.join(base, 'stack-out'), ...opts, '--workers', '1', '--json']);
    expect(r.code, r.stderr).toBe(0);
    expect(readdirSync(path.join(base, 'stack-out/pairs')).sort()).toEqual(['stack_p00002', 'stack_p00003', 'stack_p00004']);
  }, 60_000);

  it('bad input: no match, one-page stack, shard 3/2, missing reference all exit 2 with one clear line, nothing written', async () => {
    const { run } = await import('../../packages/cli/src/main.js');
    const out = path.join(base, 'bad');
    const cases: Array<[string[], RegExp]> = [
      [['--reference', seq.reference, '--frames', path.join(base, 'frames/none_%05d.png')], /pattern .*none_%05d.png matches no files/],
      [['--reference', seq.reference, '--frames', seq.reference], /is a single image \(a stack with one page\), not a sequence/],
      [['--reference', seq.reference, '--frames', seq.pattern, '--shard', '3/2'], /expected K\/N with integers 1 ≤ K ≤ N, e.g. 2\/4 for --shard but received "3\/2"/],
      [['--reference', path.join(base, 'nope.png'), '--frames', seq.pattern], /nope.png does not exist/],
      [['--frames', seq.pattern, '--pairing', 'single'], /expected a reference image or pattern for --pairing single for --reference/],
      [['--reference', seq.reference, '--frames', seq.pattern, '--range', '9:2'], /for --range but received "9:2"/],
    ];
    for (const [args, re] of cases) {
      const err: string[] = [];
      const spy = vi.spyOn(process.stderr, 'write').mockImplementation((c: string | Uint8Array) => (err.push(String(c)), true));
      let code: number;
      try {
        code = await run(['batch', ...args, '--out', out]);
      } finally {
        spy.mockRestore();
        process.exitCode = undefined;
      }
      expect(code, args.join(' ')).toBe(2);
      expect(err.join('')).toMatch(re);
      expect(err.join('').trim().split('\n')).toHaveLength(1);
    }
    expect(existsSync(path.join(out, 'pairs'))).toBe(false);
  }, 60_000);

  const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
  it.skipIf(!isRoot)('a full disk (a tiny tmpfs, root only) stops the run with a clear error and leaves only complete pairs', () => {
    const mnt = path.join(base, 'tiny');
    mkdirSync(mnt);
    // room for about 3.5 pairs of this run's output (measured on the uninterrupted run above, in allocated
    // blocks: a tmpfs charges whole pages per file, so the apparent size would leave room for none)
    const pairBytes = Number(execFileSync('du', ['-s', '--block-size=1', path.join(base, 'killed/pairs/frame_00000')], { encoding: 'utf8' }).split('\t')[0]);
    const kib = Math.max(64, Math.ceil((3.5 * pairBytes) / 4096) * 4 + 16);
    const m = spawnSync('mount', ['-t', 'tmpfs', '-o', `size=${kib}k`, 'tmpfs', mnt]);
    if (m.status !== 0) {
      console.warn(`full-disk test skipped: cannot mount a tmpfs here (${String(m.stderr).trim()})`);
      return;
    }
    try {
      const r = rhofield(['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', path.join(mnt, 'out'), ...opts, '--workers', '1']);
      expect(r.code).toBe(1);
      expect(r.stderr).toMatch(/disk is full or read-only .*rerun the same command/);
      const pairs = readdirSync(path.join(mnt, 'out/pairs'));
      expect(pairs.filter((n) => n.startsWith('.'))).toEqual([]);
      for (const p of pairs) {
        const rec = JSON.parse(readFileSync(path.join(mnt, 'out/pairs', p, 'pair.json'), 'utf8'));
        expect(rec.id).toBe(p);
        expect(loadNpy(path.join(mnt, 'out/pairs', p, 'displacement.npy')).shape.length).toBe(3);
      }
      expect(pairs.length).toBeGreaterThanOrEqual(1);
      expect(pairs.length).toBeLessThan(N);
    } finally {
      execFileSync('umount', [mnt]);
      rmSync(mnt, { recursive: true, force: true });
    }
  }, 60_000);
});
