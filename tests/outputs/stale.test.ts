/**
 * What a killed run left (staging folders named .rhofield-staging-<host>-<pid>-<random>, temporary
 * files of single-file outputs) is removed by the next run on that folder only when it belongs to
 * this host and its PID is not alive; a live process's staging, or one of another host (a job-array
 * task on another node of a shared file system), is kept.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { cli } from '../cliHarness.js';
import { HOST_TAG, ROOT, deadPid } from './helpers.js';

const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-stale-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));
const demo = (f: string) => path.join(ROOT, 'fixtures/demo', f);

function staging(dir: string, name: string): string {
  const p = path.join(dir, name);
  mkdirSync(p);
  writeFileSync(path.join(p, 'displacement.npy'), Buffer.alloc(4096));
  return name;
}

describe('stale staging of dead processes', () => {
  it('the next run removes a dead local PID\'s staging and keeps a live PID\'s and another host\'s', async () => {
    const out = path.join(tmp, 'out');
    mkdirSync(out);
    writeFileSync(path.join(out, 'notes.txt'), 'x');
    const dead = deadPid();
    expect(() => process.kill(dead, 0)).toThrow(); // really dead
    const deadLocal = staging(out, `.rhofield-staging-${HOST_TAG}-${dead}-k2j4h1`);
    const liveLocal = staging(out, `.rhofield-staging-${HOST_TAG}-${process.ppid}-a1b2c3`);
    const otherHost = staging(out, `.rhofield-staging-node-17.cluster-${dead}-zz9y8x`);
    // an earlier version's staging beside --out (no host in the name): removed when its PID is dead; its "-old" folder is never touched
    const legacy = path.join(tmp, `.out.rhofield-partial-${dead}-1764000000000`);
    const legacyOld = `${legacy}-old`;
    mkdirSync(legacy);
    mkdirSync(legacyOld);

    const r = await cli('displacement', demo('reference.png'), demo('measurement.png'), '--out', out, '--threads', '1', '--quiet');
    expect(r.code, r.err).toBe(0);
    const names = readdirSync(out);
    expect(names).not.toContain(deadLocal);
    expect(names).toContain(liveLocal);
    expect(names).toContain(otherHost);
    expect(names).toContain('notes.txt');
    expect(existsSync(legacy)).toBe(false);
    expect(existsSync(legacyOld)).toBe(true);
    // the kept ones are not results: a second run needs --force only for the results of the first
    expect((await cli('displacement', demo('reference.png'), demo('measurement.png'), '--out', out, '--threads', '1', '--force', '--quiet')).code).toBe(0);
    expect(readdirSync(out)).toEqual(expect.arrayContaining([liveLocal, otherHost]));
  });

  it('a temporary file of a killed single-file write is removed by the next write into that folder', async () => {
    const dir = path.join(tmp, 'figs');
    mkdirSync(dir);
    const dead = deadPid();
    const stale = `.bg.svg.rhofield-tmp-${HOST_TAG}-${dead}-q1w2e3`;
    const alive = `.bg.svg.rhofield-tmp-${HOST_TAG}-${process.ppid}-q1w2e3`;
    writeFileSync(path.join(dir, stale), 'half');
    writeFileSync(path.join(dir, alive), 'half');
    const r = await cli('pattern', '--width', '50mm', '--height', '40mm', '--dot', '1mm', '--out', path.join(dir, 'bg.svg'), '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(readdirSync(dir).sort()).toEqual([alive, 'bg.svg'].sort());
  });
});

describe('a commit killed half-way', () => {
  it('leaves a manifest in state "committing" that lists old and new files: refused without --force, one clean set with it', async () => {
    const out = path.join(tmp, 'half');
    mkdirSync(out);
    writeFileSync(path.join(out, 'notes.txt'), 'mine');
    expect((await cli('displacement', demo('reference.png'), demo('measurement.png'), '--out', out, '--threads', '1', '--quiet')).code).toBe(0);
    // what a kill after step 2 looks like: an old file of the previous set still there, listed in the journal
    const mf = path.join(out, '.rhofield-manifest.json');
    const m = JSON.parse(readFileSync(mf, 'utf8'));
    const old = Buffer.from('old density of the previous run');
    writeFileSync(path.join(out, 'density_rho.npy'), old);
    m.state = 'committing';
    m.files.push({ name: 'density_rho.npy', bytes: old.length, sha256: createHash('sha256').update(old).digest('hex') });
    writeFileSync(mf, JSON.stringify(m));
    const r = await cli('displacement', demo('reference.png'), demo('measurement.png'), '--out', out, '--threads', '1');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/already holds rhofield results .*an interrupted commit.*--force/);
    const f = await cli('displacement', demo('reference.png'), demo('measurement.png'), '--out', out, '--threads', '1', '--force', '--quiet');
    expect(f.code, f.err).toBe(0);
    const after = JSON.parse(readFileSync(mf, 'utf8'));
    expect(after.state).toBe('complete');
    expect(existsSync(path.join(out, 'density_rho.npy'))).toBe(false);
    expect(readFileSync(path.join(out, 'notes.txt'), 'utf8')).toBe('mine');
    expect(readdirSync(out).sort()).toEqual(['.rhofield-manifest.json', 'notes.txt', ...after.files.map((x: { name: string }) => x.name)].sort());
  });
});
