/**
 * Batch runner logic with a deterministic fake per-pair processor (tests/batch/fakePipeline.ts):
 * resumption, refusal of mixed settings, failure records, full-disk stop, shards + merge, pool.
 * Expected statistics are recomputed here by a textbook two-pass mean/variance over the fake's fields.
 */
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeNpy, pairFrames, type FrameRef, type PairJob } from '@rhofield/core';
import { mergeBatch, runBatch, type BatchPlan } from '../../packages/cli/src/batch/runner.js';
import { createPairPool, inProcessExecutor } from '../../packages/cli/src/batch/pool.js';
import type { ProbeFn } from '../../packages/cli/src/batch/types.js';
import { fakeFields, processPair, type FakeOptions } from './fakePipeline.js';

const tmp = () => mkdtempSync(path.join(os.tmpdir(), 'rf-batch-'));
const probe: ProbeFn = async (file) => (/odd/.test(file) ? { width: 32, height: 48, pages: 1 } : { width: 64, height: 64, pages: 1 });

function jobsOf(n: number, extra: string[] = []): PairJob[] {
  const frames: FrameRef[] = Array.from({ length: n }, (_, i) => ({ path: `/data/frame_${String(i).padStart(5, '0')}.png`, number: i }));
  for (const e of extra) frames.push({ path: e, number: frames.length });
  return pairFrames('single', frames, [{ path: '/data/ref.png', number: 0 }]);
}

function plan(out: string, jobs: PairJob[], options: FakeOptions = {}, more: Partial<BatchPlan> = {}): BatchPlan {
  return { outDir: out, jobs, settings: { windowPx: 32, fake: options }, pairOptions: { ...options, threads: 1 }, ...more };
}

const load = (f: string) => decodeNpy(new Uint8Array(readFileSync(f)), f);

/** Two-pass mean / sample std of the fake's fields over `ids` (independent of the runner's Welford). */
function expected(jobs: PairJob[], o: FakeOptions) {
  const fields = jobs.map((j) => fakeFields(j.measPath, j.measPage, o));
  const n = fields[0]!.dens.length;
  const mean = new Float64Array(n * 2);
  const std = new Float64Array(n * 2);
  const count = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < 2; c++) {
      const v = fields.map((f) => [f.disp[2 * i]!, f.disp[2 * i + 1]!]).filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y)).map((p) => p[c]!);
      const m = v.reduce((a, b) => a + b, 0) / v.length;
      mean[2 * i + c] = v.length ? m : NaN;
      std[2 * i + c] = v.length > 1 ? Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1)) : NaN;
      count[i] = v.length;
    }
  }
  return { mean, std, count };
}

function expectClose(got: ArrayLike<number>, want: ArrayLike<number>, rel: number, what: string): void {
  expect(got.length, what).toBe(want.length);
  for (let i = 0; i < want.length; i++) {
    const g = got[i]!;
    const w = want[i]!;
    if (Number.isNaN(w)) {
      expect(g, `${what}[${i}]`).toBeNaN();
      continue;
    }
    if (Math.abs(g - w) > rel * Math.max(Math.abs(w), 1e-12)) throw new Error(`${what}[${i}]: expected ${w} but received ${g} (rel tol ${rel})`);
  }
}

describe('runBatch (fake processor)', () => {
  it('processes every pair into pairs/<id>, writes statistics equal to a two-pass computation (rel 1e-12)', async () => {
    const out = tmp();
    const jobs = jobsOf(7);
    const r = await runBatch(plan(out, jobs), inProcessExecutor(processPair, 2), { probe });
    expect(r.processed).toBe(7);
    expect(r.failed).toEqual([]);
    expect(readdirSync(path.join(out, 'pairs')).sort()).toEqual(jobs.map((j) => j.id).sort());
    const e = expected(jobs, {});
    expectClose(load(path.join(out, 'statistics/displacement_mean.npy')).data, e.mean, 1e-12, 'displacement mean');
    expectClose(load(path.join(out, 'statistics/displacement_std.npy')).data, e.std, 1e-12, 'displacement std');
    expectClose(load(path.join(out, 'statistics/displacement_count.npy')).data, e.count, 0, 'valid count');
    expect(load(path.join(out, 'statistics/density_mean.npy')).shape).toEqual([6, 5]);
  });

  it('writes the statistics in the run\'s other formats too (here csv): the same values as float32', async () => {
    const out = tmp();
    const jobs = jobsOf(4);
    await runBatch({ ...plan(out, jobs), settings: { windowPx: 32, formats: ['npy', 'csv'] } }, inProcessExecutor(processPair), { probe });
    const lines = readFileSync(path.join(out, 'statistics/statistics.csv'), 'utf8').trim().split('\n');
    const head = lines[0]!.split(',');
    expect(head).toEqual(['x_px', 'y_px', 'dx_mean_px', 'dy_mean_px', 'dx_std_px', 'dy_std_px', 'displacement_count', 'rho_mean_kgm3', 'rho_std_kgm3', 'density_count']);
    expect(lines).toHaveLength(1 + 6 * 5);
    const mean = load(path.join(out, 'statistics/displacement_mean.npy')).data;
    const csvDx = lines.slice(1).map((l) => Number(l.split(',')[2]));
    const npyDx = Array.from({ length: 30 }, (_, i) => mean[2 * i]!);
    expectClose(csvDx, npyDx.map((v) => Math.fround(v)), 1e-6, 'csv dx_mean');
  });

  it('a rerun skips finished pairs and redoes partial ones (leftover staging folder, folder without pair.json)', async () => {
    const out = tmp();
    const jobs = jobsOf(6);
    await runBatch(plan(out, jobs), inProcessExecutor(processPair), { probe });
    const ref = readFileSync(path.join(out, 'statistics/displacement_mean.npy'));
    // simulate a run killed mid-way: one pair staged but not renamed, one final folder missing its record
    const pdir = path.join(out, 'pairs');
    const { rmSync, renameSync } = await import('node:fs');
    renameSync(path.join(pdir, jobs[2]!.id), path.join(pdir, `.${jobs[2]!.id}.partial-999-x`));
    rmSync(path.join(pdir, jobs[4]!.id, 'pair.json'));
    const r = await runBatch(plan(out, jobs), inProcessExecutor(processPair), { probe });
    expect(r.skipped).toBe(4);
    expect(r.processed).toBe(2);
    expect(readdirSync(pdir).filter((n) => n.startsWith('.'))).toEqual([]);
    expect(readFileSync(path.join(out, 'statistics/displacement_mean.npy')).equals(ref)).toBe(true);
  });

  it('refuses a folder made with other settings; --force discards the old results first', async () => {
    const out = tmp();
    const jobs = jobsOf(3);
    await runBatch(plan(out, jobs), inProcessExecutor(processPair), { probe });
    const other = { ...plan(out, jobs), settings: { windowPx: 64 } };
    await expect(runBatch(other, inProcessExecutor(processPair), { probe })).rejects.toThrow(/holds batch results made with other settings .*pass --force/);
    const r = await runBatch({ ...other, force: true }, inProcessExecutor(processPair), { probe });
    expect(r.processed).toBe(3);
    expect(JSON.parse(readFileSync(path.join(out, 'run.json'), 'utf8')).settings).toEqual({ windowPx: 64 });
    // a folder with other files takes the results beside them
    const junk = tmp();
    writeFileSync(path.join(junk, 'notes.txt'), 'x');
    expect((await runBatch(plan(junk, jobs), inProcessExecutor(processPair), { probe })).processed).toBe(3);
    expect(readFileSync(path.join(junk, 'notes.txt'), 'utf8')).toBe('x');
    // a foreign entry with a name the batch writes is refused, even with --force (which only ever deletes a batch's own entries)
    const clash = tmp();
    writeFileSync(path.join(clash, 'statistics'), 'mine');
    await expect(runBatch(plan(clash, jobs), inProcessExecutor(processPair), { probe })).rejects.toThrow(/statistics, which is not from a batch run/);
    await expect(runBatch({ ...plan(clash, jobs), force: true }, inProcessExecutor(processPair), { probe })).rejects.toThrow(/never replaces it, even with --force/);
    expect(readFileSync(path.join(clash, 'statistics'), 'utf8')).toBe('mine');
    // a user's file inside a batch folder survives --force
    writeFileSync(path.join(out, 'notes.txt'), 'keep');
    await runBatch({ ...plan(out, jobs), force: true }, inProcessExecutor(processPair), { probe });
    expect(readFileSync(path.join(out, 'notes.txt'), 'utf8')).toBe('keep');
  });

  it('a failing pair and an odd-sized frame are recorded with their errors; the rest go on; a rerun retries them', async () => {
    const out = tmp();
    const jobs = jobsOf(5, ['/data/odd_frame.png']);
    const r = await runBatch(plan(out, jobs, { failPattern: 'frame_00003' }), inProcessExecutor(processPair), { probe });
    expect(r.processed).toBe(4);
    expect(r.failed.map((f) => f.id)).toEqual(['frame_00003', 'odd_frame']);
    expect(r.failed[0]!.error).toMatch(/injected failure/);
    expect(r.failed[1]!.error).toMatch(/odd_frame.png is 32×48 px but this run's frames are 64×64 px/);
    expect(JSON.parse(readFileSync(path.join(out, 'failed/frame_00003.json'), 'utf8')).error).toMatch(/injected failure/);
    const stats = JSON.parse(readFileSync(path.join(out, 'statistics/statistics.json'), 'utf8'));
    expect(stats.pairsUsed).toBe(4);
    expect(stats.failed).toEqual(['frame_00003', 'odd_frame']);
    // the injected failure is gone on the rerun: only the two failed pairs run; the odd frame fails again
    const r2 = await runBatch(plan(out, jobs, { failPattern: 'frame_00003' }), inProcessExecutor((j, d) => processPair({ ...j, options: {} }, d)), { probe });
    expect(r2.skipped).toBe(4);
    expect(r2.processed).toBe(1);
    expect(existsSync(path.join(out, 'failed/frame_00003.json'))).toBe(false);
  });

  it('a full disk (ENOSPC injected mid-write) stops the run: no partial pair folder, finished pairs intact, rerun completes', async () => {
    const out = tmp();
    const jobs = jobsOf(6);
    const r = await runBatch(plan(out, jobs, { enospcPattern: 'frame_00002' }), inProcessExecutor(processPair), { probe });
    expect(r.stoppedBecause).toMatch(/disk is full .*rerun the same command/);
    expect(r.stoppedBecause).toContain(out);
    expect(r.stoppedBecause).not.toMatch(/\.partial-/);
    const names = readdirSync(path.join(out, 'pairs'));
    expect(names.filter((n) => n.startsWith('.'))).toEqual([]);
    expect(names).not.toContain('frame_00002');
    for (const n of names) expect(existsSync(path.join(out, 'pairs', n, 'pair.json'))).toBe(true);
    expect(existsSync(path.join(out, 'statistics'))).toBe(false);
    const r2 = await runBatch(plan(out, jobs, { enospcPattern: 'frame_00002' }), inProcessExecutor((j, d) => processPair({ ...j, options: {} }, d)), { probe });
    expect(r2.processed + r2.skipped).toBe(6);
    expect(r2.failed).toEqual([]);
  });

  it('shards K/N of one run, merged, equal the single run (rel 1e-12); merge names a missing shard', async () => {
    const jobs = jobsOf(11);
    const single = tmp();
    await runBatch(plan(single, jobs), inProcessExecutor(processPair), { probe });
    const sharded = tmp();
    for (const k of [3, 1]) await runBatch(plan(sharded, jobs, {}, { shard: { index: k, count: 3 } }), inProcessExecutor(processPair), { probe });
    await expect(mergeBatch(sharded)).rejects.toThrow(/shard\(s\) 2\/3 .* have not finished/);
    await runBatch(plan(sharded, jobs, {}, { shard: { index: 2, count: 3 } }), inProcessExecutor(processPair), { probe });
    const m = await mergeBatch(sharded);
    expect(m).toMatchObject({ shards: 3, pairsTotal: 11, pairsUsed: 11 });
    for (const f of ['displacement_mean', 'displacement_std', 'displacement_count', 'density_mean', 'density_std', 'density_count']) {
      expectClose(load(path.join(sharded, `statistics/${f}.npy`)).data, load(path.join(single, `statistics/${f}.npy`)).data, 1e-12, f);
    }
    await expect(runBatch(plan(sharded, jobs, {}, { shard: { index: 1, count: 3 }, force: true }), inProcessExecutor(processPair), { probe })).rejects.toThrow(
      /--force with --shard/,
    );
  });

  it('the piscina pool (2 workers, TypeScript worker via the tsx loader) gives the same statistics as in-process', async () => {
    const jobs = jobsOf(6);
    const a = tmp();
    const b = tmp();
    await runBatch(plan(a, jobs), inProcessExecutor(processPair), { probe });
    const pool = createPairPool(2, new URL('./fakeWorker.ts', import.meta.url).href);
    try {
      const r = await runBatch(plan(b, jobs), pool, { probe });
      expect(r.failed).toEqual([]);
      expect(r.processed).toBe(6);
    } finally {
      await pool.close();
    }
    expect(readFileSync(path.join(b, 'statistics/displacement_mean.npy')).equals(readFileSync(path.join(a, 'statistics/displacement_mean.npy')))).toBe(true);
  });
});
