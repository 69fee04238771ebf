/**
 * A full disk (ENOSPC) and a read-only file system (EROFS) or folder without permission (EACCES):
 * one line naming the user's --out (never a staging or temporary file) and the fix; exit 1 for a full
 * disk (the inputs were fine: free space and rerun), exit 2 for read-only / no permission; nothing left
 * behind and earlier results unchanged. Real small tmpfs mounts when the tests run as root on Linux;
 * the error mapping itself is also checked with injected errors.
 */
import { spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cli } from '../cliHarness.js';
import { OutputDir, storageError } from '../../packages/cli/src/outputs.js';
import { LEFTOVER, ROOT, binPath, canMount, mountTmpfs, remount, sha256, tree, unmount } from './helpers.js';

const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-storage-'));
const mounts: string[] = [];
const mountable = canMount();
afterAll(() => {
  for (const m of mounts) unmount(m);
  rmSync(tmp, { recursive: true, force: true });
});
const demo = (f: string) => path.join(ROOT, 'fixtures/demo', f);
const density = (out: string, ...extra: string[]) => cli('density', demo('reference.png'), demo('measurement.png'), '--setup', demo('setup.json'), '--out', out, '--threads', '1', ...extra);
const displacement = (out: string, ...extra: string[]) => cli('displacement', demo('reference.png'), demo('measurement.png'), '--out', out, '--threads', '1', ...extra);

function oneLine(r: { code: number; err: string }, code: number, re: RegExp): void {
  expect(r.code, r.err).toBe(code);
  expect(r.err.split('\n').filter((l) => l.startsWith('rhofield: error')), r.err).toHaveLength(1);
  expect(r.err).not.toMatch(/\n\s+at /);
  expect(r.err).toMatch(re);
  expect(r.err).not.toMatch(/rhofield-staging-|rhofield-tmp-|\.tmp-/);
}

const manifestHashes = (dir: string) => {
  const m = JSON.parse(readFileSync(path.join(dir, '.rhofield-manifest.json'), 'utf8')) as { files: Array<{ name: string; sha256: string }> };
  return m.files.map((f) => [f.name, f.sha256, sha256(path.join(dir, f.name))]);
};

describe('storage errors name the user\'s path', () => {
  it('injected: ENOSPC / EROFS / EACCES with a staging path become one line naming --out; exit kinds 1 / 2 / 2', async () => {
    const out = path.join(tmp, 'inj');
    const d = await OutputDir.open(out, false, { command: 'density' });
    const errno = (code: string, msg: string) => Object.assign(new Error(`${code}: ${msg}, open '${d.file('density.csv')}'`), { code, path: d.file('density.csv') });
    const full = d.explain(errno('ENOSPC', 'no space left on device')) as Error & { kind: string };
    expect(full.message).toBe(`--out ${out}: the disk is full; free space there or choose another --out (no partial results were left)`);
    expect(full.kind).toBe('processing');
    const ro = d.explain(errno('EROFS', 'read-only file system')) as Error & { kind: string };
    expect(ro.message).toMatch(new RegExp(`^--out ${out} is on a read-only file system; choose a writable --out$`));
    expect(ro.kind).toBe('usage');
    expect((d.explain(errno('EACCES', 'permission denied')) as Error & { kind: string }).kind).toBe('usage');
    // a library message that names a staged file names the user's folder instead
    const hdf = d.explain(new Error(`HDF5 writing ${d.file('density.h5')} failed: no space left on device`)) as Error;
    expect(hdf.message).not.toContain('rhofield-staging');
    expect(hdf.message).toContain(out);
    await d.abort();
    expect(existsSync(out)).toBe(false);
    expect(storageError(new Error('something else'), '--out', 'x')).toBeInstanceOf(Error);
  });

  it.skipIf(!mountable)('a full disk (1 MiB tmpfs): exit 1, one line naming --out, nothing left; earlier results stay whole', async () => {
    const disk = path.join(tmp, 'full');
    expect(mountTmpfs(disk, 'size=1m')).toBe(true);
    mounts.push(disk);
    const out = path.join(disk, 'out');
    oneLine(await density(out), 1, new RegExp(`--out ${out}: the disk is full; free space there or choose another --out`));
    expect(tree(disk)).toEqual([]);

    // a small earlier result (npy only) fits; a --force run that does not fit leaves it untouched
    const r0 = await displacement(out, '--format', 'npy', '--quiet');
    expect(r0.code, r0.err).toBe(0);
    const before = manifestHashes(out);
    for (const [, want, got] of before) expect(got).toBe(want);
    oneLine(await density(out, '--force'), 1, /the disk is full/);
    expect(manifestHashes(out)).toEqual(before);
    expect(tree(disk).filter((n) => LEFTOVER.test(n))).toEqual([]);
  });

  it.skipIf(!mountable)('a read-only file system: exit 2, one line naming --out, for density, view and pattern; results unchanged', async () => {
    const disk = path.join(tmp, 'ro');
    expect(mountTmpfs(disk, 'size=8m')).toBe(true);
    mounts.push(disk);
    const out = path.join(disk, 'out');
    const r0 = await displacement(out, '--format', 'npy', '--quiet');
    expect(r0.code, r0.err).toBe(0);
    const names = readdirSync(out).sort();
    expect(remount(disk, 'ro')).toBe(true);
    const fresh = path.join(disk, 'new');
    oneLine(await density(fresh), 2, new RegExp(`--out ${fresh} is on a read-only file system; choose a writable --out`));
    oneLine(await displacement(out, '--force'), 2, new RegExp(`--out ${out} is on a read-only file system`));
    oneLine(await cli('view', 'knife-edge', out), 2, new RegExp(`result folder ${out} is on a read-only file system`));
    const bg = path.join(disk, 'bg.svg');
    oneLine(await cli('pattern', '--width', '50mm', '--height', '40mm', '--dot', '1mm', '--out', bg), 2, new RegExp(`--out ${bg} is on a read-only file system`));
    expect(readdirSync(out).sort()).toEqual(names);
    expect(existsSync(fresh)).toBe(false);
  });

  // root can run a process as user nobody; that process must also be able to read this checkout (a
  // clone inside a private 0700 temporary folder is not readable to it: then the test cannot run)
  const asNobody =
    process.platform === 'linux' &&
    process.getuid?.() === 0 &&
    spawnSync(process.execPath, ['-e', `require('fs').accessSync(${JSON.stringify(binPath())}); require('fs').accessSync(${JSON.stringify(demo('reference.png'))})`], { uid: 65534, gid: 65534, cwd: '/' }).status === 0;
  it.skipIf(!asNobody)('a folder without write permission (a process of user nobody, since root ignores permission bits): exit 2, one line naming --out', () => {
    const base = mkdtempSync(path.join(os.tmpdir(), 'rhofield-perm-'));
    try {
      chmodSync(base, 0o755);
      const locked = path.join(base, 'locked');
      mkdirSync(locked);
      writeFileSync(path.join(locked, 'notes.txt'), 'mine');
      chmodSync(locked, 0o555);
      for (const out of [locked, path.join(locked, 'new')]) {
        const r = spawnSync(process.execPath, [binPath(), 'displacement', demo('reference.png'), demo('measurement.png'), '--out', out], {
          cwd: ROOT,
          encoding: 'utf8',
          uid: 65534,
          gid: 65534,
          env: { ...process.env, HOME: base },
          timeout: 120_000,
        });
        oneLine({ code: r.status ?? -1, err: r.stderr }, 2, new RegExp(`--out ${out} is not writable \\(permission denied\\); change its permissions or choose another --out`));
      }
      expect(readdirSync(locked)).toEqual(['notes.txt']);
    } finally {
      rmSync(base, { recursive: true, force: true });
    }
  });
});
