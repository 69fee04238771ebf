/**
 * Owned files inside a batch folder, with the deterministic fake processor (tests/batch/fakePipeline.ts):
 * the redo of an unfinished pair keeps a user's file in its folder; a result the user edited counts as
 * the user's (never overwritten: that pair fails naming it); a user's file with a failure record's name
 * is never replaced; a damaged list proves nothing (nothing removed); staging folders of a killed run
 * are ours and go. SHA-256 of every user file before and after.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { pairFrames, type FrameRef, type PairJob } from '@rhofield/core';
import { runBatch, type BatchPlan } from '../../packages/cli/src/batch/runner.js';
import { inProcessExecutor } from '../../packages/cli/src/batch/pool.js';
import type { ProbeFn } from '../../packages/cli/src/batch/types.js';
import { processPair, type FakeOptions } from './fakePipeline.js';

const tmp = () => mkdtempSync(path.join(os.tmpdir(), 'rf-owned-'));
const probe: ProbeFn = async () => ({ width: 64, height: 64, pages: 1 });
const sha = (f: string) => createHash('sha256').update(readFileSync(f)).digest('hex');
const MANIFEST = '.rhofield-manifest.json';

function jobsOf(n: number): PairJob[] {
  const frames: FrameRef[] = Array.from({ length: n }, (_, i) => ({ path: `/data/frame_${String(i).padStart(5, '0')}.png`, number: i }));
  return pairFrames('single', frames, [{ path: '/data/ref.png', number: 0 }]);
}

function plan(out: string, jobs: PairJob[], options: FakeOptions = {}, more: Partial<BatchPlan> = {}): BatchPlan {
  return { outDir: out, jobs, settings: { windowPx: 32, fake: options }, pairOptions: { ...options, threads: 1 }, ...more };
}

/** Run with a warning collector. */
async function run(p: BatchPlan, fake: FakeOptions | null = null) {
  const warnings: string[] = [];
  const exec = inProcessExecutor(fake ? (j, d) => processPair({ ...j, options: fake as Record<string, unknown> }, d) : processPair);
  const r = await runBatch(p, exec, { probe, warn: (m) => warnings.push(m) });
  return { r, warnings };
}

const listed = (dir: string) => (JSON.parse(readFileSync(path.join(dir, MANIFEST), 'utf8')) as { files: Array<{ name: string }> }).files.map((f) => f.name).sort();

describe('owned files in a batch folder (fake processor)', () => {
  it('the redo of an unfinished pair keeps the user file in its folder and lists only its own files', async () => {
    const out = tmp();
    const jobs = jobsOf(4);
    await run(plan(out, jobs));
    const pdir = path.join(out, 'pairs', jobs[1]!.id);
    const ours = readdirSync(pdir).filter((n) => n !== MANIFEST).sort();
    expect(listed(pdir)).toEqual(ours);
    const { rmSync } = await import('node:fs');
    rmSync(path.join(pdir, 'pair.json')); // as if killed before its record
    writeFileSync(path.join(pdir, 'notes.txt'), 'keep me');
    const before = sha(path.join(pdir, 'notes.txt'));
    const { r, warnings } = await run(plan(out, jobs));
    expect(r.processed).toBe(1);
    expect(r.failed).toEqual([]);
    expect(sha(path.join(pdir, 'notes.txt'))).toBe(before);
    expect(existsSync(path.join(pdir, 'pair.json'))).toBe(true);
    expect(listed(pdir)).toEqual(ours);
    expect(warnings.filter((w) => w.includes(path.join(pdir, 'notes.txt')))).toHaveLength(1); // one line, though met when emptying and again when refilling the folder
    expect(readdirSync(path.join(out, 'pairs')).filter((n) => n.startsWith('.'))).toEqual([]);
  });

  it('a result the user edited is theirs: --force keeps it, and that pair fails naming it rather than overwrite it', async () => {
    const out = tmp();
    const jobs = jobsOf(3);
    await run(plan(out, jobs));
    const edited = path.join(out, 'pairs', jobs[0]!.id, 'displacement.npy');
    const bytes = readFileSync(edited);
    bytes[bytes.length - 1] = (bytes[bytes.length - 1] ?? 0) ^ 0xff; // same size, other content: not the file rhofield wrote
    writeFileSync(edited, bytes);
    const before = sha(edited);
    const { r, warnings } = await run(plan(out, jobs, {}, { settings: { windowPx: 16 }, force: true }));
    expect(sha(edited)).toBe(before);
    expect(warnings.some((w) => w.startsWith(`kept ${edited}:`))).toBe(true);
    expect(r.failed.map((f) => f.id)).toEqual([jobs[0]!.id]);
    expect(r.failed[0]!.error).toMatch(new RegExp(`${edited.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')} is not a file rhofield wrote.*never overwrites it`));
    expect(r.processed).toBe(2);
    // the pair's other files of the old run are gone; the failure is recorded and listed in failed/
    expect(readdirSync(path.dirname(edited)).sort()).toEqual(['displacement.npy']);
    expect(listed(path.join(out, 'failed'))).toEqual([`${jobs[0]!.id}.json`]);
  });

  it('a user file with the name of a failure record is never replaced or removed', async () => {
    const out = tmp();
    const jobs = jobsOf(3);
    await run(plan(out, jobs));
    const theirs = path.join(out, 'failed', `${jobs[2]!.id}.json`);
    writeFileSync(theirs, '{"mine": true}\n');
    const before = sha(theirs);
    const { r, warnings } = await run(plan(out, jobs, { failPattern: 'frame_00002' }, { settings: { windowPx: 8 }, force: true }));
    expect(r.failed.map((f) => f.id)).toEqual([jobs[2]!.id]);
    expect(sha(theirs)).toBe(before);
    expect(warnings.some((w) => w.includes(theirs))).toBe(true);
    // a later success of that pair does not remove it either
    const again = await run(plan(out, jobs, {}, { settings: { windowPx: 8 } }), {});
    expect(again.r.processed).toBe(1);
    expect(sha(theirs)).toBe(before);
    expect(again.warnings.some((w) => w.startsWith(`kept ${theirs}:`))).toBe(true);
  });

  it('a user file where a pair folder belongs stays; that pair fails naming it, the others are redone', async () => {
    const out = tmp();
    const jobs = jobsOf(3);
    await run(plan(out, jobs));
    const { rmSync } = await import('node:fs');
    const spot = path.join(out, 'pairs', jobs[1]!.id);
    rmSync(spot, { recursive: true });
    writeFileSync(spot, 'a file of mine');
    const before = sha(spot);
    const { r, warnings } = await run(plan(out, jobs, {}, { settings: { windowPx: 16 }, force: true }));
    expect(sha(spot)).toBe(before);
    expect(warnings.some((w) => w.includes(spot))).toBe(true);
    expect(r.failed.map((f) => f.id)).toEqual([jobs[1]!.id]);
    expect(r.failed[0]!.error).toContain(spot);
    expect(r.processed).toBe(2);
  });

  it('--force removes staging folders of a killed run and keeps everything in a folder whose list is damaged', async () => {
    const out = tmp();
    const jobs = jobsOf(3);
    await run(plan(out, jobs));
    const stage = path.join(out, 'pairs', `.${jobs[0]!.id}.partial-999-x`);
    mkdirSync(stage);
    writeFileSync(path.join(stage, 'displacement.npy'), 'half');
    const pdir = path.join(out, 'pairs', jobs[1]!.id);
    writeFileSync(path.join(pdir, MANIFEST), '{ damaged');
    const kept = readdirSync(pdir).filter((n) => n !== MANIFEST);
    const before = Object.fromEntries(kept.map((n) => [n, sha(path.join(pdir, n))]));
    const { r, warnings } = await run(plan(out, jobs, {}, { settings: { windowPx: 16 }, force: true }));
    expect(existsSync(stage)).toBe(false);
    expect(warnings.some((w) => w.includes(`${path.join(pdir, MANIFEST)} is damaged`))).toBe(true);
    for (const n of kept) expect(sha(path.join(pdir, n)), n).toBe(before[n]);
    // that pair cannot be redone over files rhofield cannot prove it wrote; the others are
    expect(r.failed.map((f) => f.id)).toEqual([jobs[1]!.id]);
    expect(r.processed).toBe(2);
  });
});
