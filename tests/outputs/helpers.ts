/**
 * Helpers for the output-safety tests: the CLI entry (resolved from packages/cli/package.json at run
 * time, so the tests follow the package's "bin" wherever it points), SHA-256 snapshots of folders, and
 * small file-system mounts (tmpfs) for full and read-only disks when the tests run as root.
 */
import { spawn, spawnSync, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

/** The rhofield executable named by packages/cli/package.json "bin". */
export function binPath(): string {
  const pkgDir = path.join(ROOT, 'packages/cli');
  const pkg = JSON.parse(readFileSync(path.join(pkgDir, 'package.json'), 'utf8')) as { bin?: string | Record<string, string> };
  const rel = typeof pkg.bin === 'string' ? pkg.bin : pkg.bin?.['rhofield'];
  if (!rel) throw new Error('packages/cli/package.json has no bin "rhofield"');
  return path.resolve(pkgDir, rel);
}

/** Run `rhofield ARGS` as a real process to completion. */
export function rhofield(args: string[], env: Record<string, string> = {}): { code: number | null; signal: string | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [binPath(), ...args], { cwd: ROOT, encoding: 'utf8', env: { ...process.env, ...env }, timeout: 120_000 });
  return { code: r.status, signal: r.signal, stdout: r.stdout, stderr: r.stderr };
}

/** Start `rhofield ARGS` in the background. */
export function rhofieldAsync(args: string[]): ChildProcessWithoutNullStreams {
  return spawn(process.execPath, [binPath(), ...args], { cwd: ROOT, stdio: ['pipe', 'pipe', 'pipe'] });
}

export function sha256(file: string): string {
  return createHash('sha256').update(readFileSync(file)).digest('hex');
}

/** name → SHA-256 of the given files of a folder. */
export function snapshot(dir: string, names: readonly string[]): Record<string, string> {
  return Object.fromEntries(names.map((n) => [n, sha256(path.join(dir, n))]));
}

/** Every path below `dir` (relative, folders with a trailing /), sorted. */
export function tree(dir: string): string[] {
  const out: string[] = [];
  const walk = (d: string, rel: string) => {
    for (const n of readdirSync(d)) {
      const p = path.join(d, n);
      if (statSync(p).isDirectory()) {
        out.push(rel + n + '/');
        walk(p, rel + n + '/');
      } else out.push(rel + n);
    }
  };
  if (existsSync(dir)) walk(dir, '');
  return out.sort();
}

/** Names left by rhofield's staging and temporary files (must never remain after a run ends). */
export const LEFTOVER = /rhofield-staging-|rhofield-tmp-|rhofield-partial-|\.tmp-/;

/** The host part rhofield puts in staging names. */
export const HOST_TAG = os.hostname().replace(/[^A-Za-z0-9.]/g, '_') || 'host';

/** Mount a tmpfs at `dir` (created) with the given options; false when not permitted (not root, no mount). */
export function mountTmpfs(dir: string, options: string): boolean {
  mkdirSync(dir, { recursive: true });
  if (process.platform !== 'linux' || process.getuid?.() !== 0) return false;
  const r = spawnSync('mount', ['-t', 'tmpfs', '-o', options, 'tmpfs', dir], { encoding: 'utf8' });
  return r.status === 0;
}

export function remount(dir: string, options: string): boolean {
  return spawnSync('mount', ['-o', `remount,${options}`, dir], { encoding: 'utf8' }).status === 0;
}

export function unmount(dir: string): void {
  spawnSync('umount', [dir], { encoding: 'utf8' });
}

/** True when a tmpfs can be mounted here (root on Linux with mount permission). */
export function canMount(): boolean {
  const probe = path.join(os.tmpdir(), `rhofield-mount-probe-${process.pid}`);
  const ok = mountTmpfs(probe, 'size=64k');
  if (ok) unmount(probe);
  rmSync(probe, { recursive: true, force: true });
  return ok;
}

/** A PID that is certainly not alive: a child that has exited. */
export function deadPid(): number {
  const r = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))'], { encoding: 'utf8' });
  return Number(r.stdout);
}
