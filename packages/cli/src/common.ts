/**
 * Shared CLI plumbing: error → exit code mapping, messages on stderr, JSON on stdout, atomic output
 * folders, option parsing. Commands stay thin: parse, call the library, write files.
 *
 * Exit codes (docs/conventions.md): 0 success (warnings allowed), 1 processing failed, 2 usage or input error,
 * 3 (`check` only) images unusable for measurement.
 */
import { existsSync, promises as fsp, readFileSync, statSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import path from 'node:path';
import { RhofieldError, invalidParameter, VERSION } from '@rhofield/core/errors';
import { withOptionNames } from './optionNames.js';

export const EXIT = { ok: 0, failed: 1, usage: 2, unusable: 3 } as const;

export const EXIT_CODES_HELP = `
Exit codes:
  0  success (warnings may have been printed)
  1  processing failed
  2  usage or input error (bad option, unreadable file, bad setup); nothing was written
  3  (check only) the images are unusable for measurement`;

/** Verbosity and output mode shared by every command. */
export interface GlobalOpts {
  json?: boolean;
  quiet?: boolean;
  verbose?: boolean;
}

/** Human messages go to stderr; honours --quiet / --verbose. */
export class Log {
  constructor(private readonly o: GlobalOpts = {}) {}
  info(msg: string): void {
    if (!this.o.quiet) process.stderr.write(msg + '\n');
  }
  warn(msg: string): void {
    process.stderr.write('rhofield: warning: ' + msg + '\n');
  }
  debug(msg: string): void {
    if (this.o.verbose) process.stderr.write('rhofield: ' + msg + '\n');
  }
  /** Machine summary on stdout (only with --json). */
  json(obj: unknown): void {
    if (this.o.json) process.stdout.write(JSON.stringify(obj, null, 2) + '\n');
  }
}

/**
 * Map any thrown value to a one-line message and an exit code; stack only with --verbose. Library
 * parameter names are replaced by the options the user typed (optionNames.ts); the message is kept to
 * one line.
 */
export function reportError(err: unknown, verbose = false): number {
  if (err instanceof RhofieldError) {
    process.stderr.write(`rhofield: error: ${withOptionNames(err.message).replace(/\s*\n\s*/g, ' ')}\n`);
    if (verbose && err.stack) process.stderr.write(err.stack + '\n');
    return err.kind === 'processing' ? EXIT.failed : err.kind === 'unusable' ? EXIT.unusable : EXIT.usage;
  }
  const e = err as NodeJS.ErrnoException;
  if (e && typeof e === 'object' && typeof e.code === 'string' && e.code.startsWith('E') && 'path' in e) {
    const what: Record<string, string> = {
      ENOENT: 'does not exist; check the path',
      EACCES: 'is not accessible; check permissions',
      EPERM: 'is not accessible; check permissions',
      ENOSPC: 'could not be written: the disk is full; free space and rerun',
      EROFS: 'could not be written: read-only file system; choose another --out',
      ENOTDIR: 'is not a folder; check the path',
      EISDIR: 'is a folder, expected a file; check the path',
    };
    // name the user's path, not the temporary file or staging folder written on its behalf
    const shown = String(e.path)
      .replace(/\.tmp-\d+-\d+$/, '')
      .replace(/(^|[\\/])\.([^\\/]+)\.rhofield-partial-[^\\/]*(?:[\\/].*)?$/, '$1$2');
    process.stderr.write(`rhofield: error: ${shown} ${what[e.code] ?? `failed (${e.code})`}\n`);
    return e.code === 'ENOSPC' ? EXIT.failed : EXIT.usage;
  }
  const msg = err instanceof Error ? err.message : String(err);
  process.stderr.write(`rhofield: error: processing failed: ${msg.split('\n')[0]}\n`);
  if (verbose && err instanceof Error && err.stack) process.stderr.write(err.stack + '\n');
  return EXIT.failed;
}


/** Parse an integer option, rejecting NaN and out-of-range values with the usual message. */
export function parseIntOpt(name: string, raw: string | number | undefined, min: number, max = Infinity): number | undefined {
  if (raw === undefined) return undefined;
  const v = typeof raw === 'number' ? raw : Number(raw);
  if (!Number.isInteger(v) || v < min || v > max) {
    throw invalidParameter(name, `an integer ${min}${max === Infinity ? ' or more' : `–${max}`}`, raw);
  }
  return v;
}

/** Parse a floating-point option. */
export function parseNumOpt(name: string, raw: string | number | undefined, min = -Infinity, max = Infinity): number | undefined {
  if (raw === undefined) return undefined;
  const v = typeof raw === 'number' ? raw : Number(raw);
  if (!Number.isFinite(v) || v < min || v > max) {
    throw invalidParameter(name, `a number${min > -Infinity ? ` ≥ ${min}` : ''}${max < Infinity ? ` ≤ ${max}` : ''}`, raw);
  }
  return v;
}

/** Fail early, naming the file, if an input path is missing or not a file. */
export function requireFile(label: string, file: string): void {
  if (!existsSync(file)) throw new RhofieldError('input', `${label} ${file} does not exist; check the path`);
  if (!statSync(file).isFile()) throw new RhofieldError('input', `${label} ${file} is not a file; check the path`);
}

export { OutputDir, sha256File, storageError, writeOutputFiles, type OutputDirOptions, type OutputFile } from './outputs.js';
import { writeOutputFiles } from './outputs.js';

/**
 * Write one file atomically, replacing an existing one (hidden temporary file beside it + rename; storage
 * errors name the file). Files the user named without --force go through writeOutputFiles(…, false).
 */
export async function writeFileAtomic(file: string, data: string | Uint8Array): Promise<void> {
  await writeOutputFiles([{ path: file, data }], true);
}

/**
 * The git commit of the rhofield checkout the tool runs from, or "unknown" (an installed package has
 * no checkout). Only the checkout this package sits in counts (packages/cli of a workspace with
 * pnpm-workspace.yaml), never a repository that merely contains an installed copy. Handles a `.git`
 * folder and the `.git` file of a worktree, loose and packed refs.
 */
export function gitCommit(): string {
  try {
    // src/common.ts or dist/common.js → packages/cli → the workspace root
    const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');
    if (!existsSync(path.join(root, 'pnpm-workspace.yaml')) || !existsSync(path.join(root, 'packages/cli/package.json'))) return 'unknown';
    let gitDir = path.join(root, '.git');
    if (!existsSync(gitDir)) return 'unknown';
    if (statSync(gitDir).isFile()) {
      const m = /^gitdir: (.+)$/m.exec(readFileSync(gitDir, 'utf8'));
      if (!m?.[1]) return 'unknown';
      gitDir = path.resolve(root, m[1].trim());
    }
    const head = readFileSync(path.join(gitDir, 'HEAD'), 'utf8').trim();
    if (!head.startsWith('ref: ')) return head;
    const ref = head.slice(5);
    // a worktree keeps its HEAD but shares refs with the main repository (commondir)
    const common = existsSync(path.join(gitDir, 'commondir')) ? path.resolve(gitDir, readFileSync(path.join(gitDir, 'commondir'), 'utf8').trim()) : gitDir;
    for (const dir of [gitDir, common]) {
      const refFile = path.join(dir, ref);
      if (existsSync(refFile)) return readFileSync(refFile, 'utf8').trim();
    }
    const packed = path.join(common, 'packed-refs');
    if (existsSync(packed)) {
      const line = readFileSync(packed, 'utf8').split('\n').find((l) => l.endsWith(' ' + ref));
      if (line) return line.split(' ')[0] ?? 'unknown';
    }
  } catch {
    /* no readable git metadata: unknown */
  }
  return 'unknown';
}

/** Provenance block common to every result.json. */
export function provenance(): { tool: string; version: string; gitCommit: string; node: string; createdUtc: string } {
  return { tool: 'rhofield', version: VERSION, gitCommit: gitCommit(), node: process.version, createdUtc: new Date().toISOString() };
}

/** Time a stage and record it in `timings` (seconds). */
export async function timed<T>(timings: Record<string, number>, stage: string, fn: () => Promise<T> | T): Promise<T> {
  const t0 = performance.now();
  try {
    return await fn();
  } finally {
    timings[stage] = +((performance.now() - t0) / 1000).toFixed(4);
  }
}

import type cliProgress from 'cli-progress';
import { createRequire } from 'node:module';

/**
 * A stage progress bar for single-pair work: shown on stderr only when it is a terminal, not under CI,
 * not with --quiet/--json/--verbose, and only once the work has run for about a second (short runs stay
 * silent; the delay can be changed with the environment variable RHOFIELD_PROGRESS_DELAY_MS, which the
 * tests use). `stage(name, fraction)` moves it; `stop()` clears it.
 */
export class StageProgress {
  private bar: cliProgress.SingleBar | null = null;
  private timer: NodeJS.Timeout | null = null;
  private name = 'starting';
  private fraction = 0;
  private readonly enabled: boolean;
  constructor(o: GlobalOpts, delayMs = Number(process.env['RHOFIELD_PROGRESS_DELAY_MS'] ?? 1000)) {
    this.enabled = !!process.stderr.isTTY && process.env['CI'] !== 'true' && !o.quiet && !o.json && !o.verbose;
    if (this.enabled) {
      this.timer = setTimeout(() => this.show(), delayMs);
      this.timer.unref();
    }
  }
  private show(): void {
    // loaded when a bar is first shown (short runs and --help do not pay for it)
    const bars = createRequire(import.meta.url)('cli-progress') as typeof cliProgress;
    this.bar = new bars.SingleBar(
      { format: 'rhofield {bar} {percentage}% | {stage} | {duration_formatted}', stream: process.stderr, hideCursor: true, clearOnComplete: true },
      bars.Presets.shades_classic,
    );
    this.bar.start(100, Math.round(this.fraction * 100), { stage: this.name });
  }
  /** Enter a stage; `fraction` (0–1) is the share of the work done when it starts. */
  stage(name: string, fraction: number): void {
    this.name = name;
    this.fraction = fraction;
    this.bar?.update(Math.round(fraction * 100), { stage: name });
  }
  stop(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    if (this.bar) {
      this.bar.update(100, { stage: 'done' });
      this.bar.stop();
    }
    this.bar = null;
  }
}
