/**
 * Outputs are owned: with or without --force, no command deletes, moves or overwrites a file rhofield
 * did not write. Inputs and an unrelated file that live inside --out are byte-identical (SHA-256) after
 * --force runs of every command that writes a folder; files of an earlier run that a new run does not
 * produce are removed; a foreign file with a name rhofield would write is refused, naming it.
 */
import { copyFileSync, existsSync, lstatSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { cli } from '../cliHarness.js';
import { LEFTOVER, ROOT, rhofield, sha256, snapshot, tree } from './helpers.js';

const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-owned-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const demo = (f: string) => path.join(ROOT, 'fixtures/demo', f);

/** A folder as a user keeps it: the pair, the setup and a logbook. */
function userFolder(name: string): { dir: string; mine: string[] } {
  const dir = path.join(tmp, name);
  mkdirSync(dir, { recursive: true });
  for (const f of ['reference.png', 'measurement.png', 'setup.json']) copyFileSync(demo(f), path.join(dir, f));
  writeFileSync(path.join(dir, 'logbook.txt'), 'run 7: heater at 80 W, tunnel 3 m/s\n');
  return { dir, mine: ['reference.png', 'measurement.png', 'setup.json', 'logbook.txt'] };
}

const manifestOf = (dir: string) => JSON.parse(readFileSync(path.join(dir, '.rhofield-manifest.json'), 'utf8')) as { state: string; command: string; files: Array<{ name: string; bytes: number; sha256: string }> };

/** The folder holds exactly the user's files plus the manifest's files, each with the recorded hash; no staging or temp left. */
function expectConsistent(dir: string, mine: readonly string[]): void {
  const m = manifestOf(dir);
  expect(m.state).toBe('complete');
  const names = readdirSync(dir).sort();
  expect(names.filter((n) => LEFTOVER.test(n))).toEqual([]);
  expect(names).toEqual([...new Set([...mine, '.rhofield-manifest.json', ...m.files.map((f) => f.name)])].sort());
  for (const f of m.files) expect(sha256(path.join(dir, f.name)), f.name).toBe(f.sha256);
}

const pairArgs = (dir: string) => [path.join(dir, 'reference.png'), path.join(dir, 'measurement.png')];

describe('--force keeps every file rhofield did not write (SHA-256 before and after)', () => {
  it('density, displacement, view and density again, all with --force into the folder that holds the inputs', async () => {
    const { dir, mine } = userFolder('lab');
    const before = snapshot(dir, mine);

    // a folder with other files takes the results beside them (no --force needed the first time)
    let r = await cli('density', ...pairArgs(dir), '--setup', path.join(dir, 'setup.json'), '--out', dir, '--threads', '1', '--quiet');
    expect(r.code, r.err).toBe(0);
    expectConsistent(dir, mine);
    expect(manifestOf(dir).command).toBe('density');
    expect(existsSync(path.join(dir, 'density_rho.npy'))).toBe(true);

    // without --force: refused, nothing changes
    const results = snapshot(dir, readdirSync(dir));
    r = await cli('density', ...pairArgs(dir), '--setup', path.join(dir, 'setup.json'), '--out', dir, '--threads', '1');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/already holds rhofield results.*--force/);
    expect(r.err.trim().split('\n')).toHaveLength(1);
    expect(snapshot(dir, readdirSync(dir))).toEqual(results);

    r = await cli('density', ...pairArgs(dir), '--setup', path.join(dir, 'setup.json'), '--out', dir, '--threads', '1', '--force', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(snapshot(dir, mine)).toEqual(before);
    expectConsistent(dir, mine);

    // view adds its figures to the folder's list
    r = await cli('view', 'knife-edge', dir, '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(manifestOf(dir).files.map((f) => f.name)).toEqual(expect.arrayContaining(['view_knife-edge_0deg.png', 'view_knife-edge_0deg.svg', 'density_rho.npy']));
    expect(manifestOf(dir).command).toBe('density');
    expectConsistent(dir, mine);
    // the same view again: refused without --force, replaced with it
    r = await cli('view', 'knife-edge', dir);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/view_knife-edge_0deg\.png already exists.*--force/);
    r = await cli('view', 'knife-edge', dir, '--force', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(snapshot(dir, mine)).toEqual(before);
    expectConsistent(dir, mine);

    // displacement --force: the density files and the views of the old run (ours, not produced now) are removed
    r = await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--force', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(snapshot(dir, mine)).toEqual(before);
    expectConsistent(dir, mine);
    const left = readdirSync(dir);
    expect(left.filter((n) => n.startsWith('density') || n.startsWith('view_'))).toEqual([]);
    expect(left).toContain('displacement.csv');
    expect(manifestOf(dir).command).toBe('displacement');

    r = await cli('density', ...pairArgs(dir), '--setup', path.join(dir, 'setup.json'), '--out', dir, '--threads', '1', '--force', '--format', 'npy', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(snapshot(dir, mine)).toEqual(before);
    expectConsistent(dir, mine);
    expect(readdirSync(dir).filter((n) => n.endsWith('.png') && !mine.includes(n))).toEqual([]); // the figures of the csv,png run are gone
  });

  it('simulate --force keeps the setup and logbook; a user image named like one simulate writes is refused even with --force', async () => {
    const dir = path.join(tmp, 'plan');
    mkdirSync(dir);
    copyFileSync(demo('setup.json'), path.join(dir, 'setup.json'));
    writeFileSync(path.join(dir, 'logbook.txt'), 'planning the 80 W case\n');
    const mine = ['setup.json', 'logbook.txt'];
    const before = snapshot(dir, mine);
    const sim = (...extra: string[]) => cli('simulate', '--setup', path.join(dir, 'setup.json'), '--field', 'gaussian', '--size', '128', '--out', dir, '--quiet', ...extra);
    expect((await sim()).code).toBe(0);
    expect((await sim()).code).toBe(2);
    const r = await sim('--force', '--seed', '2');
    expect(r.code, r.err).toBe(0);
    expect(snapshot(dir, mine)).toEqual(before);
    expectConsistent(dir, mine);

    // the user's own photographs in --out: simulate would write reference.png → refused, nothing written
    const { dir: lab, mine: labFiles } = userFolder('lab-sim');
    const labBefore = snapshot(lab, labFiles);
    for (const extra of [[], ['--force']]) {
      const s = await cli('simulate', '--setup', path.join(lab, 'setup.json'), '--field', 'gaussian', '--size', '128', '--out', lab, ...extra);
      expect(s.code).toBe(2);
      expect(s.err).toMatch(/reference\.png is not a file rhofield wrote.*never overwrites it, even with --force/);
      expect(s.err.trim().split('\n')).toHaveLength(1);
    }
    expect(readdirSync(lab).sort()).toEqual([...labFiles].sort());
    expect(snapshot(lab, labFiles)).toEqual(labBefore);
  });

  it('a foreign file with a name the run writes is refused with and without --force, naming it; found after the work, it is refused the same way', async () => {
    const { dir, mine } = userFolder('clash');
    writeFileSync(path.join(dir, 'result.json'), '{"my": "own notes"}\n');
    const own = [...mine, 'result.json'];
    const before = snapshot(dir, own);
    for (const extra of [[], ['--force']]) {
      const r = await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', ...extra);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(new RegExp(`${path.join(dir, 'result.json').replace(/[.*+?^${}()|[\]\\]/g, '\\$&')} is not a file rhofield wrote`));
    }
    expect(readdirSync(dir).sort()).toEqual([...own].sort());
    expect(snapshot(dir, own)).toEqual(before);

    // a name known only after the work (a figure): the staged results are discarded, the folder is unchanged
    rmSync(path.join(dir, 'result.json'));
    writeFileSync(path.join(dir, 'displacement_dx.png'), 'my sketch');
    const own2 = [...mine, 'displacement_dx.png'];
    const before2 = snapshot(dir, own2);
    const r = await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--force');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/displacement_dx\.png is not a file rhofield wrote/);
    expect(readdirSync(dir).sort()).toEqual([...own2].sort());
    expect(snapshot(dir, own2)).toEqual(before2);
  });

  it('a symbolic link with a result name (even a dangling one) is the user\'s: refused with --force, the link kept', async () => {
    const { dir } = userFolder('link');
    symlinkSync(path.join(tmp, 'elsewhere', 'result.json'), path.join(dir, 'result.json'));
    const r = await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--force');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/result\.json is not a file rhofield wrote/);
    expect(lstatSync(path.join(dir, 'result.json')).isSymbolicLink()).toBe(true);
  });

  it('a result file the user changed after the run is no longer ours: --force refuses to replace it', async () => {
    const { dir, mine } = userFolder('edited');
    expect((await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--quiet')).code).toBe(0);
    writeFileSync(path.join(dir, 'displacement.csv'), readFileSync(path.join(dir, 'displacement.csv'), 'utf8') + '# checked by hand\n');
    const edited = sha256(path.join(dir, 'displacement.csv'));
    const r = await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--force');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/displacement\.csv is not a file rhofield wrote \(or was changed since\)/);
    expect(sha256(path.join(dir, 'displacement.csv'))).toBe(edited);
    expect(readdirSync(dir).filter((n) => LEFTOVER.test(n))).toEqual([]);
    void mine;
  });

  it('a damaged manifest: exit 2 naming it, nothing touched', async () => {
    const { dir, mine } = userFolder('damaged');
    expect((await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--quiet')).code).toBe(0);
    writeFileSync(path.join(dir, '.rhofield-manifest.json'), '{"kind": "rhofield-outp');
    const all = snapshot(dir, readdirSync(dir));
    const r = await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--force');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/\.rhofield-manifest\.json .*is damaged/);
    expect(snapshot(dir, readdirSync(dir))).toEqual(all);
    void mine;
  });

  it('view --out FILE and pattern --out FILE: a named file is replaced only with --force; the SVG beside it follows the same rule; the folder around is untouched', async () => {
    const { dir } = userFolder('figs');
    const res = path.join(tmp, 'figs-result');
    expect((await cli('density', ...pairArgs(dir), '--setup', path.join(dir, 'setup.json'), '--out', res, '--threads', '1', '--quiet')).code).toBe(0);
    const fig = path.join(dir, 'knife.png');
    const svg = path.join(dir, 'knife.svg');
    writeFileSync(svg, '<svg>my drawing</svg>');
    const before = snapshot(dir, readdirSync(dir));
    // knife.png is new but knife.svg exists: refused without --force, nothing written
    let r = await cli('view', 'knife-edge', res, '--out', fig);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/knife\.svg already exists.*--force/);
    expect(snapshot(dir, readdirSync(dir))).toEqual(before);
    // with --force the user named the file: both are replaced
    r = await cli('view', 'knife-edge', res, '--out', fig, '--force', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(readFileSync(fig).subarray(1, 4).toString()).toBe('PNG');
    expect(readFileSync(svg, 'utf8')).toMatch(/<svg/);
    expect(readFileSync(svg, 'utf8')).not.toMatch(/my drawing/);
    for (const [n, h] of Object.entries(before)) if (n !== 'knife.svg') expect(sha256(path.join(dir, n)), n).toBe(h);
    expect(readdirSync(dir).filter((n) => LEFTOVER.test(n))).toEqual([]);
    // the named file is not added to a manifest (none is created in the user's folder)
    expect(existsSync(path.join(dir, '.rhofield-manifest.json'))).toBe(false);

    // pattern --out F
    const pat = path.join(dir, 'background.svg');
    writeFileSync(pat, 'the print I made last week');
    const args = ['pattern', '--width', '60mm', '--height', '40mm', '--dot', '1mm', '--out', pat, '--quiet'];
    r = await cli(...args);
    expect(r.code).toBe(2);
    expect(readFileSync(pat, 'utf8')).toBe('the print I made last week');
    r = await cli(...args, '--force');
    expect(r.code, r.err).toBe(0);
    expect(readFileSync(pat, 'utf8')).toMatch(/^<\?xml|<svg/);
    for (const n of ['reference.png', 'measurement.png', 'setup.json', 'logbook.txt']) expect(sha256(path.join(dir, n))).toBe(before[n]);
    expect(readdirSync(dir).filter((n) => LEFTOVER.test(n))).toEqual([]);
  });

  it('view --out F inside a result folder: F joins the folder\'s list; replaced only with --force, even a file the user made', async () => {
    const { dir, mine } = userFolder('named-in-results');
    expect((await cli('density', ...pairArgs(dir), '--setup', path.join(dir, 'setup.json'), '--out', dir, '--threads', '1', '--quiet')).code).toBe(0);
    const fig = path.join(dir, 'knife.png');
    let r = await cli('view', 'knife-edge', dir, '--out', fig, '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(manifestOf(dir).files.map((f) => f.name)).toEqual(expect.arrayContaining(['knife.png', 'knife.svg']));
    expectConsistent(dir, mine);
    r = await cli('view', 'knife-edge', dir, '--out', fig);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/knife\.png already exists; pass --force/);
    // a file the user made and then named: --force replaces it (the user asked for it by name)
    writeFileSync(path.join(dir, 'poster.png'), 'old poster');
    r = await cli('view', 'colour', dir, '--out', path.join(dir, 'poster.png'));
    expect(r.code).toBe(2);
    expect(readFileSync(path.join(dir, 'poster.png'), 'utf8')).toBe('old poster');
    r = await cli('view', 'colour', dir, '--out', path.join(dir, 'poster.png'), '--force', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(readFileSync(path.join(dir, 'poster.png')).subarray(1, 4).toString()).toBe('PNG');
    expectConsistent(dir, mine);
  });

  it('a view file in a result folder that rhofield did not write is never replaced, even with --force', async () => {
    const { dir } = userFolder('viewclash');
    expect((await cli('density', ...pairArgs(dir), '--setup', path.join(dir, 'setup.json'), '--out', dir, '--threads', '1', '--quiet')).code).toBe(0);
    writeFileSync(path.join(dir, 'view_colour.png'), 'annotated by hand');
    const r = await cli('view', 'colour', dir, '--force');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/view_colour\.png is not a file rhofield wrote/);
    expect(readFileSync(path.join(dir, 'view_colour.png'), 'utf8')).toBe('annotated by hand');
    expect(existsSync(path.join(dir, 'view_colour.svg'))).toBe(false);
  });
});

describe('two processes writing one folder at the same time (real processes)', () => {
  it('both --force runs succeed: one complete set, every listed file intact, the user\'s files untouched', async () => {
    const { dir, mine } = userFolder('race');
    const before = snapshot(dir, mine);
    const { rhofieldAsync } = await import('./helpers.js');
    const runs = ['32', '64'].map((w) => {
      const c = rhofieldAsync(['displacement', ...pairArgs(dir), '--out', dir, '--window', w, '--passes', '1', '--threads', '1', '--force', '--quiet']);
      let err = '';
      c.stderr.on('data', (d: Buffer) => (err += d.toString()));
      return new Promise<{ code: number | null; err: string }>((resolve) => c.on('exit', (code) => resolve({ code, err })));
    });
    const results = await Promise.all(runs);
    for (const r of results) expect(r.code, r.err).toBe(0);
    expect(snapshot(dir, mine)).toEqual(before);
    expectConsistent(dir, mine);
  }, 120_000);
});

describe('the commit lock', () => {
  it('a commit waits while a live process holds the folder\'s lock, and takes over the lock of a dead one', async () => {
    const { HOST_TAG, deadPid } = await import('./helpers.js');
    const { dir, mine } = userFolder('lock');
    const lock = path.join(dir, '.rhofield-commit-lock');
    writeFileSync(lock, `${HOST_TAG}-${process.ppid}-l0ck`);
    const run = cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--quiet');
    await new Promise((r) => setTimeout(r, 2500)); // the demo pair takes well under a second
    expect(existsSync(path.join(dir, '.rhofield-manifest.json'))).toBe(false);
    rmSync(lock);
    const r = await run;
    expect(r.code, r.err).toBe(0);
    expectConsistent(dir, mine);
    writeFileSync(lock, `${HOST_TAG}-${deadPid()}-l0ck`);
    const r2 = await cli('displacement', ...pairArgs(dir), '--out', dir, '--threads', '1', '--force', '--quiet');
    expect(r2.code, r2.err).toBe(0);
    expect(existsSync(lock)).toBe(false);
    expectConsistent(dir, mine);
  }, 60_000);
});

describe('batch --force and merge keep the frames and notes inside --out (real processes)', () => {
  it('frames, reference and a notes file in --out are byte-identical after a batch and a batch --force', async () => {
    const { writeSequence } = await import('../batch/synthFrames.js');
    const dir = path.join(tmp, 'batch');
    const seq = await writeSequence(dir, { size: 96, frames: 3, seed: 4 });
    writeFileSync(path.join(dir, 'notes.txt'), 'sequence 3, 30 fps\n');
    const mine = readdirSync(dir).sort();
    const before = snapshot(dir, mine);
    const args = ['batch', '--reference', seq.reference, '--frames', seq.pattern, '--out', dir, '--window', '32', '--passes', '1', '--format', 'npy', '--workers', '1', '--quiet'];
    let r = rhofield(args);
    expect(r.code, r.stderr).toBe(0);
    r = rhofield([...args, '--force', '--window', '16']);
    expect(r.code, r.stderr).toBe(0);
    expect(snapshot(dir, mine)).toEqual(before);
    expect(tree(dir).filter((n) => LEFTOVER.test(n))).toEqual([]);
    expect(existsSync(path.join(dir, 'statistics/displacement_mean.npy'))).toBe(true);

    // a sharded run into a folder that holds the frames, then merge: the user's files unchanged
    const sharded = path.join(tmp, 'batch-shards');
    const seq2 = await writeSequence(sharded, { size: 96, frames: 4, seed: 5 });
    writeFileSync(path.join(sharded, 'notes.txt'), 'sharded\n');
    const mine2 = readdirSync(sharded).sort();
    const before2 = snapshot(sharded, mine2);
    const a2 = ['batch', '--reference', seq2.reference, '--frames', seq2.pattern, '--out', sharded, '--window', '32', '--passes', '1', '--format', 'npy', '--workers', '1', '--quiet'];
    for (const k of ['1/2', '2/2']) {
      r = rhofield([...a2, '--shard', k]);
      expect(r.code, r.stderr).toBe(0);
    }
    r = rhofield(['merge', sharded, '--force', '--quiet']);
    expect(r.code, r.stderr).toBe(0);
    expect(snapshot(sharded, mine2)).toEqual(before2);
    expect(existsSync(path.join(sharded, 'statistics/displacement_mean.npy'))).toBe(true);
    expect(tree(sharded).filter((n) => LEFTOVER.test(n))).toEqual([]);
  }, 180_000);
});
