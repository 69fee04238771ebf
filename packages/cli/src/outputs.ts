/**
 * Owned outputs: how rhofield writes results without ever touching a file it did not write.
 *
 * A results folder (the --out of displacement, density, simulate; a result folder that `view` adds
 * figures to) carries a manifest, `.rhofield-manifest.json`, listing every file rhofield wrote there
 * with its size and SHA-256. A file is "ours" only while it is listed and still has that size and hash;
 * anything else in the folder (the user's images, a logbook, a figure the user edited) is foreign and is
 * never deleted, moved or overwritten, with or without --force.
 *
 * Writing a folder (see docs/outputs.md for what an interrupted run leaves):
 * 1. files are written into a hidden staging folder inside --out,
 *    `.rhofield-staging-<host>-<pid>-<random>`;
 * 2. commit (holding the folder's `.rhofield-commit-lock`, so two processes never exchange sets at
 *    once): the manifest is rewritten with state "committing", listing the old and the new files
 *    (so that every file of ours is accounted for at every instant), the staged files are renamed into
 *    place one by one, old files of ours that the new run did not write are removed, and the manifest
 *    is written last with state "complete" and only the new files;
 * 3. on failure or interrupt the staging folder is removed (and --out itself, if this run created it
 *    and it is empty).
 * A staging folder left by a process that died (same host, PID no longer alive) is removed by the
 * next run on that folder; one of a live process, or of another host (a job-array task on another node
 * of a shared file system), is left alone.
 *
 * A single file named by the user (`pattern --out F`, `view --out F`, with the files written beside
 * it) is written to a hidden temporary file beside it and linked (without --force: fails if the name
 * exists) or renamed (with --force) into place.
 */
import { createHash } from 'node:crypto';
import { constants as fsc, createReadStream, existsSync, lstatSync, promises as fsp, readdirSync, rmdirSync, rmSync, statSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { RhofieldError, VERSION, invalidParameter } from '@rhofield/core/errors';

/** Name of the manifest inside a results folder. */
export const MANIFEST_NAME = '.rhofield-manifest.json';
const STAGING_PREFIX = '.rhofield-staging-';
const TEMP_MARK = '.rhofield-tmp-';

/** One file rhofield wrote. */
export interface ManifestEntry {
  name: string;
  bytes: number;
  sha256: string;
}

/** Contents of `.rhofield-manifest.json`. */
export interface OutputManifest {
  kind: 'rhofield-outputs';
  formatVersion: 1;
  /** "complete": the files form one finished set; "committing": a commit was interrupted (old and new files listed). */
  state: 'complete' | 'committing';
  /** The command that wrote the set (view adds its files to the set of the command before it). */
  command: string;
  tool: 'rhofield';
  version: string;
  updatedUtc: string;
  files: ManifestEntry[];
}

// ---------------------------------------------------------------------------------------------------
// process-wide registry of open outputs (for SIGINT / SIGTERM)

interface Cleanable {
  cleanupSync(): void;
}

const live = new Set<Cleanable>();
const state = { interrupted: 0, committing: 0, afterCommit: null as (() => void) | null, installed: false };

function interruptedError(): RhofieldError {
  return new RhofieldError('processing', 'interrupted; no results were written');
}

/**
 * Install SIGINT / SIGTERM handlers for the command-line process: remove every open staging folder and
 * temporary file, then exit 130 (SIGINT) or 143 (SIGTERM). An interrupt during a commit lets the commit
 * finish first (it only renames files), so the folder holds one complete set. Called by the CLI entry
 * only, never by code the in-process tests run.
 */
export function installSignalCleanup(): void {
  if (state.installed) return;
  state.installed = true;
  const onSignal = (sig: 'SIGINT' | 'SIGTERM'): void => {
    const code = sig === 'SIGINT' ? 130 : 143;
    if (state.interrupted) {
      // a second interrupt while a commit finishes: leave at once (the manifest still lists every file of ours)
      process.stderr.write(`rhofield: interrupted again (${sig}); stopping now, rerun with --force to tidy the folder\n`);
      process.exit(code);
    }
    state.interrupted = code;
    const cleanAll = (): void => {
      for (const x of Array.from(live)) {
        try {
          x.cleanupSync();
        } catch {
          /* best effort: the next run removes what is left */
        }
      }
      live.clear();
    };
    const finish = (): void => {
      const had = live.size;
      cleanAll();
      process.stderr.write(`rhofield: interrupted (${sig})${had ? '; unfinished files removed' : ''}\n`);
      process.exit(code);
    };
    if (state.committing > 0) {
      state.afterCommit = () => {
        cleanAll();
        process.stderr.write(`rhofield: interrupted (${sig}) while moving the finished results into place; they are complete\n`);
        process.exit(code);
      };
    } else finish();
  };
  process.on('SIGINT', () => onSignal('SIGINT'));
  process.on('SIGTERM', () => onSignal('SIGTERM'));
}

/**
 * Remove `p` (a folder or file of unfinished work, e.g. a batch pair's staging folder) if the process
 * is interrupted; call the returned function once the work is finished or cleaned up.
 */
export function removeOnInterrupt(p: string): () => void {
  const c: Cleanable = { cleanupSync: () => rmSync(p, { recursive: true, force: true }) };
  live.add(c);
  return () => {
    live.delete(c);
  };
}

function enterCommit(): void {
  if (state.interrupted) throw interruptedError();
  state.committing++;
}

function leaveCommit(): void {
  state.committing--;
  if (state.committing === 0 && state.afterCommit) state.afterCommit();
}

// ---------------------------------------------------------------------------------------------------
// names, hosts, PIDs

function hostTag(): string {
  return os.hostname().replace(/[^A-Za-z0-9.]/g, '_') || 'host';
}

function randomTag(): string {
  return Math.random().toString(36).slice(2, 10) || '0';
}

/** `<host>-<pid>-<random>`: identifies the process that owns a staging folder or temporary file. */
export function ownerTag(): string {
  return `${hostTag()}-${process.pid}-${randomTag()}`;
}

/** Parse `<host>-<pid>-<random>` at the end of a name. */
function parseOwner(tag: string): { host: string; pid: number } | null {
  const m = /^(.+)-(\d+)-([0-9a-z]+)$/.exec(tag);
  return m ? { host: m[1]!, pid: Number(m[2]) } : null;
}

/** True if a process with this PID runs on this machine (EPERM: it exists but belongs to someone else). */
export function pidAlive(pid: number): boolean {
  if (pid === process.pid) return true;
  if (!Number.isInteger(pid) || pid <= 0) return false;
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** True for the tag of a dead process on this host (never for another host: it may be alive there). */
function deadOwner(tag: string): boolean {
  const o = parseOwner(tag);
  return !!o && o.host === hostTag() && !pidAlive(o.pid);
}

/**
 * Remove what dead rhofield processes of this host left in `dir`: staging folders, temporary files of
 * single-file outputs. Returns the names removed.
 */
export async function removeStale(dir: string): Promise<string[]> {
  let names: string[];
  try {
    names = await fsp.readdir(dir);
  } catch {
    return [];
  }
  const removed: string[] = [];
  for (const name of names) {
    let tag: string | null = null;
    if (name.startsWith(STAGING_PREFIX)) tag = name.slice(STAGING_PREFIX.length);
    else if (name.startsWith('.') && name.includes(TEMP_MARK)) tag = name.slice(name.lastIndexOf(TEMP_MARK) + TEMP_MARK.length);
    if (tag !== null && deadOwner(tag)) {
      await fsp.rm(path.join(dir, name), { recursive: true, force: true }).catch(() => {});
      removed.push(name);
    }
  }
  return removed;
}

/**
 * Staging folders of earlier versions sat beside --out as `.<name>.rhofield-partial-<pid>-<ms>`
 * (without a host); remove those whose PID is not alive here. The `-old` folders of those versions may
 * hold a user's files and are never touched.
 */
async function removeLegacyPartials(target: string): Promise<void> {
  const parent = path.dirname(target);
  const re = new RegExp(`^\\.${path.basename(target).replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}\\.rhofield-partial-(\\d+)-(\\d+)$`);
  let names: string[];
  try {
    names = await fsp.readdir(parent);
  } catch {
    return;
  }
  for (const n of names) {
    const m = re.exec(n);
    if (m && !pidAlive(Number(m[1]))) await fsp.rm(path.join(parent, n), { recursive: true, force: true }).catch(() => {});
  }
}

/** Name of the lock a commit holds in the folder (its content: the owner tag). */
const LOCK_NAME = '.rhofield-commit-lock';

/**
 * Take the folder's commit lock (exclusive create), so that two processes never exchange result sets in
 * one folder at the same time. A lock of a dead process of this host is taken over; a live one is
 * waited for (up to ~30 s).
 */
export async function takeLock(dir: string, tag: string, shownDir: string, label: string): Promise<() => void> {
  const lock = path.join(dir, LOCK_NAME);
  for (let i = 0; i < 600; i++) {
    try {
      await fsp.writeFile(lock, tag, { flag: 'wx' });
      const release = (): void => rmSync(lock, { force: true });
      const c: Cleanable = { cleanupSync: release };
      live.add(c);
      return () => {
        live.delete(c);
        release();
      };
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
      const owner = await fsp.readFile(lock, 'utf8').catch(() => '');
      if (owner && deadOwner(owner)) {
        await fsp.rm(lock, { force: true });
        continue;
      }
      await new Promise((r) => setTimeout(r, 50));
    }
  }
  throw new RhofieldError('processing', `${label} ${shownDir} is being written by another rhofield process (${path.join(shownDir, LOCK_NAME)}: ${await fsp.readFile(lock, 'utf8').catch(() => '?')}); wait for it to finish, or delete that file if no rhofield runs there any more`);
}

// ---------------------------------------------------------------------------------------------------
// errors

function errCode(e: unknown): string | undefined {
  const c = (e as NodeJS.ErrnoException | undefined)?.code;
  if (typeof c === 'string') return c;
  const msg = e instanceof Error ? e.message : String(e);
  if (/ENOSPC|no space left on device/i.test(msg)) return 'ENOSPC';
  if (/EDQUOT|disk quota exceeded/i.test(msg)) return 'EDQUOT';
  if (/EROFS|read-only file system/i.test(msg)) return 'EROFS';
  if (/EACCES|permission denied/i.test(msg)) return 'EACCES';
  return undefined;
}

/**
 * A storage error (disk full, quota, read-only, no permission) as one line naming the user's path
 * (`label` is the option as typed, e.g. `--out`); other errors are returned unchanged.
 * Disk full → exit 1 (the inputs were fine; rerun after freeing space); read-only / permission → exit 2.
 */
export function storageError(e: unknown, label: string, userPath: string): unknown {
  if (e instanceof RhofieldError) return e;
  switch (errCode(e)) {
    case 'ENOSPC':
      return new RhofieldError('processing', `${label} ${userPath}: the disk is full; free space there or choose another ${label} (no partial results were left)`);
    case 'EDQUOT':
      return new RhofieldError('processing', `${label} ${userPath}: the disk quota is exhausted; free space or choose another ${label} (no partial results were left)`);
    case 'EROFS':
      return new RhofieldError('usage', `${label} ${userPath} is on a read-only file system; choose a writable ${label}`);
    case 'EACCES':
    case 'EPERM':
      return new RhofieldError('usage', `${label} ${userPath} is not writable (permission denied); change its permissions or choose another ${label}`);
    default:
      return e;
  }
}

/** Replace every occurrence of an internal path (staging, temp) in an error's message by the user's path. */
function scrub(e: unknown, internal: string, shown: string): unknown {
  if (!(e instanceof Error) || !e.message.includes(internal)) return e;
  const msg = e.message.split(internal).join(shown);
  if (e instanceof RhofieldError) return new RhofieldError(e.kind, msg);
  const c = new Error(msg);
  const code = (e as NodeJS.ErrnoException).code;
  if (code) (c as NodeJS.ErrnoException).code = code;
  return c;
}

/**
 * A recursive mkdir can report ENOENT where the real cause is a read-only or unwritable ancestor:
 * retry the first missing level on its own to learn the true error.
 */
async function realMkdirError(abs: string, e: unknown): Promise<unknown> {
  let dir = abs;
  while (!existsSync(path.dirname(dir)) && path.dirname(dir) !== dir) dir = path.dirname(dir);
  try {
    await fsp.mkdir(dir);
    await fsp.rmdir(dir);
    return e;
  } catch (e2) {
    return e2;
  }
}

// ---------------------------------------------------------------------------------------------------
// manifest

/** SHA-256 of a file, hex (streamed). */
export async function sha256File(file: string): Promise<string> {
  const h = createHash('sha256');
  await new Promise<void>((resolve, reject) => {
    createReadStream(file)
      .on('data', (c) => h.update(c))
      .on('end', () => resolve())
      .on('error', reject);
  });
  return h.digest('hex');
}

export async function entryOf(dir: string, name: string): Promise<ManifestEntry> {
  const f = path.join(dir, name);
  const st = await fsp.stat(f);
  return { name, bytes: st.size, sha256: await sha256File(f) };
}

function isEntry(x: unknown): x is ManifestEntry {
  const e = x as ManifestEntry;
  return !!e && typeof e.name === 'string' && typeof e.bytes === 'number' && typeof e.sha256 === 'string' && safeName(e.name);
}

/** A plain file name (no folder part, not the manifest): the only names a manifest may list. */
export function safeName(name: string): boolean {
  return name.length > 0 && name !== '.' && name !== '..' && name !== MANIFEST_NAME && !name.includes('/') && !name.includes('\\') && !name.includes('\0');
}

/**
 * Read the manifest of `dir`: null when there is none.
 * @throws RhofieldError (input) naming the file when it is damaged.
 */
export async function readManifest(dir: string, shownDir = dir): Promise<OutputManifest | null> {
  const f = path.join(dir, MANIFEST_NAME);
  let text: string;
  try {
    text = await fsp.readFile(f, 'utf8');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw storageError(e, '--out', shownDir);
  }
  try {
    const m = JSON.parse(text) as Partial<OutputManifest>;
    if (m && m.kind === 'rhofield-outputs' && Array.isArray(m.files) && m.files.every(isEntry)) return m as OutputManifest;
  } catch {
    /* reported below */
  }
  throw new RhofieldError(
    'input',
    `${path.join(shownDir, MANIFEST_NAME)} (the list of files rhofield wrote there) is damaged; restore it, or choose another --out (rhofield will not replace files it cannot prove it wrote)`,
  );
}

/** Entries of the manifest whose files still exist with the recorded size and SHA-256. */
export async function ownedEntries(dir: string, m: OutputManifest | null): Promise<Map<string, ManifestEntry>> {
  const owned = new Map<string, ManifestEntry>();
  if (!m) return owned;
  for (const e of m.files) {
    if (owned.has(e.name)) continue;
    const f = path.join(dir, e.name);
    let st;
    try {
      st = await fsp.lstat(f);
    } catch {
      continue;
    }
    if (!st.isFile() || st.size !== e.bytes) continue;
    // a journal may list the old and the new version of a name: either proves ownership
    const hash = await sha256File(f);
    const match = m.files.find((x) => x.name === e.name && x.bytes === st.size && x.sha256 === hash);
    if (match) owned.set(e.name, match);
  }
  return owned;
}

export function manifestText(command: string, st: OutputManifest['state'], files: ManifestEntry[]): string {
  const m: OutputManifest = { kind: 'rhofield-outputs', formatVersion: 1, state: st, command, tool: 'rhofield', version: VERSION, updatedUtc: new Date().toISOString(), files };
  return JSON.stringify(m, null, 2) + '\n';
}

function foreignError(label: string, shownDir: string, name: string): RhofieldError {
  return new RhofieldError(
    'usage',
    `${path.join(shownDir, name)} is not a file rhofield wrote (or was changed since), and this run would write a file of that name; rhofield never overwrites it, even with --force: move it away or choose another ${label}`,
  );
}

// ---------------------------------------------------------------------------------------------------
// output folders

export interface OutputDirOptions {
  /** Command name recorded in the manifest. */
  command?: string;
  /**
   * "replace" (default): the new files form the folder's result set; with --force the previous set is
   * replaced (its files that the new run does not write are removed). "add": the files join the
   * existing set (view adds figures to a result folder); --force replaces only same-named files of ours.
   */
  mode?: 'replace' | 'add';
  /** Names this run will surely write: a foreign file with one of them is refused before the work. */
  expect?: readonly string[];
  /** The option that named the folder, for messages (default --out). */
  label?: string;
  /** Names the user gave (view --out F): like a single named file, replaced with --force even if rhofield did not write it. */
  named?: readonly string[];
}

/**
 * An output folder whose files are owned (see the module comment): results are staged inside the
 * folder and moved in at `commit()`; files rhofield did not write are never touched.
 */
export class OutputDir implements Cleanable {
  readonly staging: string;
  private readonly tag = ownerTag();
  private done = false;
  private constructor(
    /** Absolute path of the folder. */
    readonly target: string,
    /** The path as the user typed it (for messages). */
    readonly shown: string,
    private readonly force: boolean,
    private readonly mode: 'replace' | 'add',
    private readonly command: string,
    private readonly label: string,
    /** First folder this run created (removed again on abort if empty), or undefined. */
    private readonly created: string | undefined,
    private readonly named: ReadonlySet<string> = new Set(),
  ) {
    this.staging = path.join(target, `${STAGING_PREFIX}${this.tag}`);
  }

  /**
   * Check the folder, remove what dead runs left there, create the staging folder.
   * @throws RhofieldError (usage) if results are there and not `force`, if a foreign file has a name in
   *   `opts.expect`, or if the folder cannot be written (naming it).
   */
  static async open(target: string, force = false, opts: OutputDirOptions = {}): Promise<OutputDir> {
    const label = opts.label ?? '--out';
    if (!target) throw invalidParameter(label, 'an output folder', target);
    if (state.interrupted) throw interruptedError();
    const abs = path.resolve(target);
    let created: string | undefined;
    if (existsSync(abs)) {
      if (!statSync(abs).isDirectory()) throw new RhofieldError('usage', `${label} ${target} exists and is not a folder; choose another path`);
    } else {
      try {
        created = await fsp.mkdir(abs, { recursive: true });
      } catch (e0) {
        const e = await realMkdirError(abs, e0);
        const mapped = storageError(e, label, target);
        if (mapped !== e) throw mapped;
        throw new RhofieldError('usage', `${label} ${target} cannot be created (${(e as NodeJS.ErrnoException).code ?? (e as Error).message}); choose a writable path`);
      }
    }
    const d = new OutputDir(abs, target, force, opts.mode ?? 'replace', opts.command ?? 'rhofield', label, created, new Set(opts.named ?? []));
    try {
      await removeStale(abs);
      await removeLegacyPartials(abs);
      const m = await readManifest(abs, target);
      const owned = await ownedEntries(abs, m);
      if (d.mode === 'replace' && !force && owned.size > 0) {
        throw new RhofieldError(
          'usage',
          `${label} ${target} already holds rhofield results (${owned.size} file(s) of \`${m!.command}\`${m!.state === 'committing' ? ', an interrupted commit' : ''}); pass --force to replace them (only files rhofield wrote are replaced; other files stay) or choose another folder`,
        );
      }
      for (const name of opts.expect ?? []) d.checkName(name, owned);
      await fsp.mkdir(d.staging);
    } catch (e) {
      d.removeCreated();
      throw storageError(e, label, target);
    }
    live.add(d);
    return d;
  }

  /** Refuse a name that exists and is not ours (always), or is ours but may not be replaced (no --force in add mode). */
  private checkName(name: string, owned: Map<string, ManifestEntry>): void {
    const f = path.join(this.target, name);
    let exists = false;
    let isDir = false;
    try {
      isDir = lstatSync(f).isDirectory(); // a symbolic link (even a dangling one) is the user's too
      exists = true;
    } catch {
      exists = false;
    }
    if (!exists) return;
    if (this.named.has(name)) {
      if (isDir) throw new RhofieldError('usage', `${this.label} ${path.join(this.shown, name)} is a folder; give a file name`);
      if (!this.force) throw new RhofieldError('usage', `${path.join(this.shown, name)} already exists; pass --force to replace it or choose another name`);
      return;
    }
    if (!owned.has(name)) throw foreignError(this.label, this.shown, name);
    if (!this.force && this.mode === 'add') {
      throw new RhofieldError('usage', `${path.join(this.shown, name)} already exists; pass --force to replace it or choose another name`);
    }
  }

  /** Path of a file inside the staging folder. */
  file(name: string): string {
    return path.join(this.staging, name);
  }

  async writeFile(name: string, data: string | Uint8Array): Promise<void> {
    await fsp.writeFile(this.file(name), data);
  }

  /**
   * Turn an error of the work into the message the user sees: storage errors name --out, internal
   * staging paths are replaced by the user's folder.
   */
  explain(e: unknown): unknown {
    return storageError(scrub(e, this.staging, this.shown), this.label, this.shown);
  }

  /**
   * Move the staged files into place (see the module comment for the order) and write the manifest.
   * Returns the names written.
   * @throws RhofieldError (usage) if a foreign file took one of the names, or results appeared meanwhile.
   */
  async commit(): Promise<string[]> {
    if (this.done) return [];
    if (state.interrupted) throw interruptedError();
    let unlock = (): void => {};
    try {
      const names: string[] = [];
      for (const ent of await fsp.readdir(this.staging, { withFileTypes: true })) {
        if (!ent.isFile()) throw new RhofieldError('processing', `internal: unexpected folder ${ent.name} among the results`);
        names.push(ent.name);
      }
      names.sort();
      unlock = await takeLock(this.target, this.tag, this.shown, this.label);
      const m = await readManifest(this.target, this.shown);
      const owned = await ownedEntries(this.target, m);
      if (this.mode === 'replace' && !this.force && owned.size > 0) {
        throw new RhofieldError('usage', `${this.label} ${this.shown} received rhofield results from another process meanwhile; rerun with --force or choose another folder`);
      }
      for (const n of names) this.checkName(n, owned);
      // hashed side by side on the thread pool (in name order all the same)
      const fresh: ManifestEntry[] = await Promise.all(names.map((n) => entryOf(this.staging, n)));
      const newSet = new Set(names);
      const keep = this.mode === 'add' ? Array.from(owned.values()).filter((e) => !newSet.has(e.name)) : [];
      const remove = this.mode === 'replace' ? Array.from(owned.keys()).filter((n) => !newSet.has(n)) : [];
      const journal = Array.from(owned.values()).concat(fresh);
      const tmp = path.join(this.staging, `${MANIFEST_NAME}.next`);
      const manifest = path.join(this.target, MANIFEST_NAME);
      enterCommit();
      try {
        await fsp.writeFile(tmp, manifestText(this.command, 'committing', journal));
        await fsp.rename(tmp, manifest);
        for (const n of names) await fsp.rename(path.join(this.staging, n), path.join(this.target, n));
        for (const n of remove) await fsp.rm(path.join(this.target, n), { force: true });
        const final = keep.concat(fresh).sort((a, b) => a.name.localeCompare(b.name));
        // adding to a set whose own commit was interrupted leaves it marked as such
        const finalState = this.mode === 'add' && m?.state === 'committing' ? 'committing' : 'complete';
        await fsp.writeFile(tmp, manifestText(this.mode === 'add' && m ? m.command : this.command, finalState, final));
        await fsp.rename(tmp, manifest);
        await fsp.rm(this.staging, { recursive: true, force: true });
        this.done = true;
        live.delete(this);
      } finally {
        leaveCommit();
      }
      return names;
    } catch (e) {
      throw this.explain(e);
    } finally {
      unlock();
    }
  }

  /** Remove the staging folder (on any failure), and --out itself if this run created it and it is empty. */
  async abort(): Promise<void> {
    if (this.done) return;
    this.cleanupSync();
  }

  /** Synchronous cleanup (also run from the signal handler). */
  cleanupSync(): void {
    if (this.done) return;
    this.done = true;
    live.delete(this);
    rmSync(this.staging, { recursive: true, force: true });
    this.removeCreated();
  }

  /** Remove the folders this run created, innermost first, while they are empty. */
  private removeCreated(): void {
    if (!this.created) return;
    let dir = this.target;
    const stop = path.dirname(this.created);
    while (dir !== stop && dir.startsWith(this.created)) {
      try {
        if (readdirSync(dir).length > 0) return;
        rmdirSync(dir);
      } catch {
        return;
      }
      dir = path.dirname(dir);
    }
  }
}

// ---------------------------------------------------------------------------------------------------
// single files named by the user

/** A file to write and its data. */
export interface OutputFile {
  path: string;
  data: string | Uint8Array;
}

class TempFiles implements Cleanable {
  readonly paths: string[] = [];
  cleanupSync(): void {
    for (const p of this.paths) rmSync(p, { force: true });
    live.delete(this);
  }
}

/**
 * Write files the user named (and files beside them): without `force` none may exist (checked for all
 * before any is written, and again exclusively when each is put in place); with `force` they are
 * replaced. Each appears complete (hidden temporary file beside it, then link or rename). Storage
 * errors name the user's path with `label` (the option, e.g. `--out`).
 */
export async function writeOutputFiles(files: readonly OutputFile[], force: boolean, label = '--out'): Promise<void> {
  if (state.interrupted) throw interruptedError();
  for (const f of files) {
    let st;
    try {
      st = statSync(f.path);
    } catch {
      continue;
    }
    if (st.isDirectory()) throw new RhofieldError('usage', `${label} ${f.path} is a folder; give a file name`);
    if (!force) throw new RhofieldError('usage', `${f.path} already exists; pass --force to replace it or choose another name`);
  }
  const temps = new TempFiles();
  live.add(temps);
  const current = { path: files[0]?.path ?? '' };
  try {
    const staged: Array<{ tmp: string; path: string }> = [];
    for (const f of files) {
      current.path = f.path;
      const dir = path.dirname(path.resolve(f.path));
      if (!existsSync(dir)) throw new RhofieldError('usage', `${label} ${f.path}: the folder ${path.dirname(f.path)} does not exist; create it or choose another path`);
      await removeStale(dir);
      const tmp = path.join(dir, `.${path.basename(f.path)}${TEMP_MARK}${ownerTag()}`);
      temps.paths.push(tmp);
      await fsp.writeFile(tmp, f.data);
      staged.push({ tmp, path: f.path });
    }
    if (state.interrupted) throw interruptedError();
    for (const s of staged) {
      current.path = s.path;
      if (force) await fsp.rename(s.tmp, s.path);
      else await placeExclusive(s.tmp, s.path);
    }
  } catch (e) {
    temps.cleanupSync();
    throw storageError(scrubAll(e, temps.paths, current.path), label, current.path);
  }
  live.delete(temps);
}

function scrubAll(e: unknown, internals: readonly string[], shown: string): unknown {
  let r = e;
  for (const p of internals) r = scrub(r, p, shown);
  return r;
}

/** Put `tmp` at `file` only if `file` does not exist (hard link, or an exclusive copy where links are not supported). */
async function placeExclusive(tmp: string, file: string): Promise<void> {
  try {
    await fsp.link(tmp, file);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'EEXIST') throw new RhofieldError('usage', `${file} already exists (it appeared while rhofield was writing); pass --force to replace it or choose another name`);
    if (code !== 'EPERM' && code !== 'ENOTSUP' && code !== 'EOPNOTSUPP' && code !== 'ENOSYS' && code !== 'EXDEV') throw e;
    try {
      await fsp.copyFile(tmp, file, fsc.COPYFILE_EXCL);
    } catch (e2) {
      if ((e2 as NodeJS.ErrnoException).code === 'EEXIST') throw new RhofieldError('usage', `${file} already exists; pass --force to replace it or choose another name`);
      throw e2;
    }
  }
  await fsp.rm(tmp, { force: true });
}
