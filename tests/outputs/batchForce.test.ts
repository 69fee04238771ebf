/**
 * The batch folder follows the single-pair rule: a file rhofield did not write is never deleted, moved
 * or overwritten. A user's files inside pairs/<id>/, pairs/, statistics/, failed/, shards/<K>-of-<N>/
 * and logs/ are byte-identical (SHA-256) after `batch --force` and after `merge`, each named on one
 * warning line with the folder it keeps; the results rhofield wrote are replaced (new grid, new files);
 * every folder's manifest lists exactly its files of rhofield's. Also: --workers above the cores is
 * capped with one warning line, except in an emitted job script. Real processes of the built command.
 */
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeNpy } from '@rhofield/core';
import { writeSequence } from '../batch/synthFrames.js';
import { LEFTOVER, rhofield, sha256, tree } from './helpers.js';

const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-batchforce-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const shapeOf = (f: string) => decodeNpy(new Uint8Array(readFileSync(f)), f).shape;
const MANIFEST = '.rhofield-manifest.json';
const manifestOf = (dir: string) => JSON.parse(readFileSync(path.join(dir, MANIFEST), 'utf8')) as { kind: string; state: string; command: string; files: Array<{ name: string; bytes: number; sha256: string }> };

/** The folder's manifest is complete and lists exactly its files except `mine`, each with its recorded size and hash. */
function expectOwned(dir: string, mine: readonly string[] = []): void {
  const m = manifestOf(dir);
  expect(m.kind).toBe('rhofield-outputs');
  expect(m.state).toBe('complete');
  const listed = m.files.map((f) => f.name).sort();
  expect(readdirSync(dir).filter((n) => n !== MANIFEST && !mine.includes(n)).sort(), dir).toEqual(listed);
  for (const f of m.files) {
    expect(statSync(path.join(dir, f.name)).size, f.name).toBe(f.bytes);
    expect(sha256(path.join(dir, f.name)), f.name).toBe(f.sha256);
  }
}

/** Write a user's file; returns its path relative to `dir`. */
function userFile(dir: string, rel: string, text: string): string {
  mkdirSync(path.dirname(path.join(dir, rel)), { recursive: true });
  writeFileSync(path.join(dir, rel), text);
  return rel;
}

const hashes = (dir: string, rels: readonly string[]) => Object.fromEntries(rels.map((r) => [r, sha256(path.join(dir, r))]));
const warnings = (stderr: string) => stderr.split('\n').filter((l) => l.startsWith('rhofield: warning: kept '));

const OPTS = ['--passes', '1', '--format', 'npy', '--workers', '1', '--quiet'];

describe('batch --force and merge keep the user files inside the batch folder', () => {
  it('user files in pairs/<id>/, pairs/, statistics/, failed/ and logs/ are byte-identical after batch --force; the results are replaced', async () => {
    const dir = path.join(tmp, 'run');
    const seq = await writeSequence(path.join(dir, 'frames'), { size: 96, frames: 3, seed: 4 });
    const args = ['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', dir, ...OPTS];
    let r = rhofield([...args, '--window', '32']);
    expect(r.code, r.stderr).toBe(0);
    const pairs = readdirSync(path.join(dir, 'pairs')).sort();
    expect(pairs).toHaveLength(3);
    const p0 = path.join('pairs', pairs[0]!);
    const oldPair = sha256(path.join(dir, p0, 'displacement.npy'));
    const oldShape = shapeOf(path.join(dir, 'statistics/displacement_mean.npy'));
    expectOwned(path.join(dir, p0));
    expectOwned(path.join(dir, 'statistics'));

    const mine = [
      userFile(dir, path.join(p0, 'notes.txt'), 'pair 0: a bubble crossed the beam\n'),
      userFile(dir, 'pairs/README.txt', 'frames of 3 December\n'),
      userFile(dir, 'statistics/plot-by-hand.txt', 'mean of the first run, plotted in a notebook\n'),
      userFile(dir, 'failed/why.txt', 'none failed so far\n'),
      userFile(dir, 'logs/node-notes.txt', 'node 7 was slow\n'),
      'frames/ref.png',
    ];
    const before = hashes(dir, mine);

    r = rhofield([...args, '--window', '16', '--force']);
    expect(r.code, r.stderr).toBe(0);
    expect(hashes(dir, mine)).toEqual(before);
    // one warning line per kept file of the user's, naming it and the folder it keeps (logs/ is never emptied)
    const w = warnings(r.stderr);
    for (const rel of ['pairs/README.txt', path.join(p0, 'notes.txt'), 'statistics/plot-by-hand.txt', 'failed/why.txt']) {
      expect(w.filter((l) => l.includes(path.join(dir, rel))), rel).toHaveLength(1);
    }
    expect(w.find((l) => l.includes(path.join(p0, 'notes.txt')))).toContain(`so the folder ${path.join(dir, p0)} stays`);
    expect(w).toHaveLength(4);
    expect(r.stderr.split('\n').filter(Boolean).every((l) => l.startsWith('rhofield: warning: kept '))).toBe(true);

    // the results are the new run's: a finer grid, new pair files, every folder's list exact
    expect(JSON.parse(readFileSync(path.join(dir, 'run.json'), 'utf8')).settings.windowPx).toBe(16);
    const newShape = shapeOf(path.join(dir, 'statistics/displacement_mean.npy'));
    expect(newShape[0]!).toBeGreaterThan(oldShape[0]!);
    expect(sha256(path.join(dir, p0, 'displacement.npy'))).not.toBe(oldPair);
    expect(shapeOf(path.join(dir, p0, 'displacement.npy')).slice(0, 2)).toEqual(newShape.slice(0, 2));
    expect(JSON.parse(readFileSync(path.join(dir, p0, 'pair.json'), 'utf8')).settingsHash).toBe(JSON.parse(readFileSync(path.join(dir, 'run.json'), 'utf8')).settingsHash);
    expectOwned(path.join(dir, p0), ['notes.txt']);
    for (const p of pairs.slice(1)) expectOwned(path.join(dir, 'pairs', p));
    expectOwned(path.join(dir, 'statistics'), ['plot-by-hand.txt']);
    expect(tree(dir).filter((n) => LEFTOVER.test(n) || /\.partial-|\.old-/.test(n))).toEqual([]);

    // a plain rerun resumes (nothing redone) and leaves the user's files alone too
    r = rhofield([...args, '--window', '16']);
    expect(r.code, r.stderr).toBe(0);
    expect(hashes(dir, mine)).toEqual(before);
  }, 120_000);

  it('merge replaces the statistics it wrote and keeps user files in statistics/ and shards/<K>-of-<N>/; a later batch --force keeps them too', async () => {
    const dir = path.join(tmp, 'sharded');
    const seq = await writeSequence(path.join(dir, 'frames'), { size: 96, frames: 4, seed: 5 });
    const args = ['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', dir, '--window', '32', ...OPTS];
    for (const k of ['1/2', '2/2']) {
      const r = rhofield([...args, '--shard', k]);
      expect(r.code, r.stderr).toBe(0);
    }
    let r = rhofield(['merge', dir, '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(manifestOf(path.join(dir, 'statistics')).command).toBe('merge');
    expectOwned(path.join(dir, 'shards/1-of-2'));
    const stat = path.join(dir, 'statistics/displacement_mean.npy');
    const firstInode = statSync(stat).ino;
    const firstHash = sha256(stat);

    const mine = [
      userFile(dir, 'statistics/notes.txt', 'merged on the login node\n'),
      userFile(dir, 'shards/1-of-2/notes.txt', 'shard 1 ran twice\n'),
      userFile(dir, 'logs/task-1.out', 'scheduler output\n'),
    ];
    const before = hashes(dir, mine);
    r = rhofield(['merge', dir, '--force', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(hashes(dir, mine)).toEqual(before);
    expect(warnings(r.stderr)).toEqual([`rhofield: warning: kept ${path.join(dir, 'statistics/notes.txt')}: rhofield did not write it (or it was changed since), so the folder ${path.join(dir, 'statistics')} stays`]);
    // replaced: a new file (another inode) with the same, deterministic statistics
    expect(statSync(stat).ino).not.toBe(firstInode);
    expect(sha256(stat)).toBe(firstHash);
    expectOwned(path.join(dir, 'statistics'), ['notes.txt']);

    // batch --force (one process, no shards) discards the shards' files but not the user's
    r = rhofield([...args.filter((a) => a !== '--quiet'), '--force', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(hashes(dir, mine)).toEqual(before);
    expect(readdirSync(path.join(dir, 'shards'))).toEqual(['1-of-2']);
    expect(readdirSync(path.join(dir, 'shards/1-of-2'))).toEqual(['notes.txt']);
    expect(warnings(r.stderr).some((l) => l.includes(path.join(dir, 'shards/1-of-2/notes.txt')) && l.includes(`folder ${path.join(dir, 'shards/1-of-2')} stays`))).toBe(true);
    expectOwned(path.join(dir, 'statistics'), ['notes.txt']);
    expect(manifestOf(path.join(dir, 'statistics')).command).toBe('batch');
  }, 120_000);
});

describe('--workers against the machine', () => {
  const cores = Math.max(1, os.availableParallelism());
  it('--workers above the cores is capped with one warning line; an emitted job script keeps the number asked for', async () => {
    const dir = path.join(tmp, 'workers');
    const seq = await writeSequence(path.join(dir, 'frames'), { size: 64, frames: 2, seed: 6 });
    const base = ['batch', '--reference', seq.reference, '--frames', seq.pattern, '--window', '32', '--passes', '1', '--format', 'npy'];
    const r = rhofield([...base, '--out', path.join(dir, 'out'), '--workers', '1024', '--json', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr.split('\n').filter(Boolean)).toEqual([`rhofield: warning: --workers 1024 exceeds the ${cores} core${cores === 1 ? '' : 's'}; using ${cores}`]);
    expect(JSON.parse(r.stdout).workers).toBe(cores);

    // at the cores: no warning
    const ok = rhofield([...base, '--out', path.join(dir, 'out2'), '--workers', String(cores), '--quiet']);
    expect(ok.code, ok.stderr).toBe(0);
    expect(ok.stderr).toBe('');

    // a job script's workers run on a cluster node: not capped by this machine
    const script = path.join(dir, 'job.sh');
    const e = rhofield([...base, '--out', path.join(dir, 'out3'), '--workers', '1024', '--emit-job-script', script, '--array-tasks', '2', '--quiet']);
    expect(e.code, e.stderr).toBe(0);
    expect(e.stderr).toBe('');
    const text = readFileSync(script, 'utf8');
    expect(text).toContain('#SBATCH --cpus-per-task=1024');
    expect(text).toMatch(/ --workers 1024( |\n)/);
  }, 60_000);
});
