/**
 * Owned files in a batch folder: every folder the batch writes files into (pairs/<id>/, statistics/,
 * shards/<K>-of-<N>/, failed/) carries `.rhofield-manifest.json` in the format of single-pair results
 * (../outputs.ts): the files rhofield wrote there, with size and SHA-256. Replacing or discarding
 * results (--force, the redo of an unfinished pair, merge's new statistics) removes only files listed
 * there that still have the listed size and SHA-256; a folder goes only when it is empty afterwards.
 * Anything else (a user's notes in pairs/<id>/, a figure edited by hand) stays, with one warning line
 * naming it and the folder it keeps.
 *
 * Folders that hold only folders (pairs/, shards/) need no list: their entries are pair or shard
 * folders (handled as above) and staging folders of unfinished work (`.<id>.partial-*`,
 * `<K>-of-<N>.partial-*`, `statistics.partial-*`), which only the batch creates and which are removed
 * whole. logs/ is written by the scheduler, not by rhofield, and is never emptied.
 */
import { createHash } from 'node:crypto';
import { existsSync, promises as fsp } from 'node:fs';
import path from 'node:path';
import { RhofieldError } from '@rhofield/core';
import { MANIFEST_NAME, entryOf, manifestText, ownedEntries, ownerTag, readManifest, safeName, takeLock, type ManifestEntry, type OutputManifest } from '../outputs.js';
import { writeAtomic } from './folders.js';

/** The lock ../outputs.ts takes while it updates a folder's files (a dead owner's is taken over by the next one). */
const LOCK_NAME = '.rhofield-commit-lock';

/** Receives one warning line (without the `rhofield: warning:` prefix). */
export type Warn = (msg: string) => void;

/** The command recorded in the batch's manifests. */
export type BatchCommand = 'batch' | 'merge';

/** Read a folder's manifest; a damaged one is reported (one warning) and proves nothing: null. */
async function manifestOrNull(dir: string, warn: Warn): Promise<OutputManifest | null> {
  try {
    return await readManifest(dir);
  } catch (e) {
    if (!(e instanceof RhofieldError)) throw e;
    warn(`${path.join(dir, MANIFEST_NAME)} is damaged; nothing in ${dir} is replaced or removed (restore the file, or tidy the folder yourself)`);
    return null;
  }
}

function keptLine(dir: string, name: string): string {
  return `kept ${path.join(dir, name)}: rhofield did not write it (or it was changed since), so the folder ${dir} stays`;
}

/**
 * Write the manifest of a folder the batch has just filled (a staging folder): every file in it.
 * @throws if the folder holds a subfolder (the batch writes plain files only).
 */
export async function recordFolder(dir: string, command: BatchCommand): Promise<ManifestEntry[]> {
  const files: ManifestEntry[] = [];
  for (const ent of await fsp.readdir(dir, { withFileTypes: true })) {
    if (ent.name === MANIFEST_NAME) continue;
    if (!ent.isFile() || !safeName(ent.name)) throw new RhofieldError('processing', `internal: unexpected entry ${ent.name} in ${dir}`);
    files.push(await entryOf(dir, ent.name));
  }
  files.sort((a, b) => a.name.localeCompare(b.name));
  await fsp.writeFile(path.join(dir, MANIFEST_NAME), manifestText(command, 'complete', files));
  return files;
}

/**
 * Remove the files of `dir` that the batch wrote (listed in its manifest, size and SHA-256 unchanged),
 * then the manifest, then `dir` itself when empty. Every other entry stays, with one warning line.
 * @returns true if `dir` is gone.
 */
export async function removeOwned(dir: string, warn: Warn): Promise<boolean> {
  let names: string[];
  try {
    names = await fsp.readdir(dir);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') return true;
    if (code === 'ENOTDIR') {
      // a file of the user's where the batch keeps a folder
      warn(`kept ${dir}: rhofield did not write it`);
      return false;
    }
    throw e;
  }
  const m = await manifestOrNull(dir, warn);
  const owned = await ownedEntries(dir, m);
  const foreign: string[] = [];
  for (const n of names) {
    if (n === MANIFEST_NAME) continue;
    // the commit lock of a live process (failed/ is updated under it): that process's, not the user's
    if (n === LOCK_NAME) {
      foreign.push(n);
      continue;
    }
    if (owned.has(n)) await fsp.rm(path.join(dir, n), { force: true });
    else foreign.push(n);
  }
  if (foreign.length > 0) {
    for (const n of foreign) if (n !== LOCK_NAME) warn(keptLine(dir, n));
    // nothing of ours is left to list (a damaged list stays, as reported)
    if (m) await fsp.rm(path.join(dir, MANIFEST_NAME), { force: true });
    return false;
  }
  if (m || existsSync(path.join(dir, MANIFEST_NAME))) {
    // a damaged manifest was reported above and stays
    if (!m) return false;
    await fsp.rm(path.join(dir, MANIFEST_NAME), { force: true });
  }
  try {
    await fsp.rmdir(dir);
    return true;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ENOTEMPTY' || code === 'EEXIST') return false; // a file appeared meanwhile: not ours
    if (code === 'ENOENT') return true;
    throw e;
  }
}

/**
 * Empty a folder that holds only the batch's folders (pairs/, shards/): staging folders (`isStaging`)
 * are removed whole, every other folder by {@link removeOwned}; a plain file is foreign and stays.
 * The folder itself goes when empty. Returns true if it is gone.
 */
export async function removeOwnedFolders(dir: string, isStaging: (name: string) => boolean, warn: Warn): Promise<boolean> {
  let ents;
  try {
    ents = await fsp.readdir(dir, { withFileTypes: true });
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return true;
    throw e;
  }
  let left = false;
  for (const ent of ents) {
    const p = path.join(dir, ent.name);
    if (ent.isDirectory() && isStaging(ent.name)) await fsp.rm(p, { recursive: true, force: true });
    else if (ent.isDirectory()) left = !(await removeOwned(p, warn)) || left;
    else {
      warn(keptLine(dir, ent.name));
      left = true;
    }
  }
  if (left) return false;
  try {
    await fsp.rmdir(dir);
    return true;
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return true;
    return false;
  }
}

export interface InstallOptions {
  /** The file that marks the folder complete (pair.json, statistics.json, partial.json): moved in last. */
  readonly marker: string;
  readonly warn: Warn;
  /** Name of the folder the previous version is moved aside to (default `<target>.old-<pid>-<ms>`). */
  readonly asideName?: string;
}

/**
 * Put the complete staging folder `stage` (with its manifest, see {@link recordFolder}) at `target`.
 * - `target` absent: one rename.
 * - `target` holds only files of ours: it is moved aside, the staging folder renamed into place, the
 *   old one emptied of our files and removed (a reader sees the old or the new complete folder; only if
 *   killed between the two renames, neither).
 * - `target` holds foreign files: they stay (one warning line each); the manifest is first rewritten to
 *   list the old and the new files, the new files are moved in one by one, the marker last, the old
 *   files of ours that the new set lacks are removed, and the manifest is written with the new files.
 * @throws RhofieldError (usage) naming a foreign file that has the name of a new one (never overwritten).
 */
export async function installFolder(stage: string, target: string, opts: InstallOptions): Promise<void> {
  try {
    await fsp.rename(stage, target);
    return;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code !== 'ENOTEMPTY' && code !== 'EEXIST' && code !== 'EISDIR' && code !== 'ENOTDIR') throw e;
  }
  const st = await fsp.lstat(target);
  if (!st.isDirectory()) {
    throw new RhofieldError('usage', `${target} is not a folder rhofield made; rhofield never replaces it: move it away and rerun`);
  }
  const m = await manifestOrNull(target, opts.warn);
  const owned = await ownedEntries(target, m);
  const names = (await fsp.readdir(target)).filter((n) => n !== MANIFEST_NAME);
  const foreign = names.filter((n) => !owned.has(n));
  if (foreign.length === 0 && (m || !existsSync(path.join(target, MANIFEST_NAME)))) {
    const aside = path.join(path.dirname(target), opts.asideName ?? `${path.basename(target)}.old-${process.pid}-${Date.now()}`);
    await fsp.rename(target, aside);
    await fsp.rename(stage, target);
    await removeOwned(aside, opts.warn);
    return;
  }
  const fresh = (await readManifest(stage))?.files ?? [];
  const clash = fresh.find((f) => foreign.includes(f.name));
  if (clash) {
    throw new RhofieldError(
      'usage',
      `${path.join(target, clash.name)} is not a file rhofield wrote (or was changed since), and the batch would write a file of that name there; rhofield never overwrites it, even with --force: move it away and rerun`,
    );
  }
  const command = (await readManifest(stage))?.command ?? 'batch';
  const journal = Array.from(owned.values()).concat(fresh);
  await writeAtomic(path.join(target, MANIFEST_NAME), manifestText(command, 'committing', journal));
  const order = fresh.map((f) => f.name).filter((n) => n !== opts.marker);
  if (fresh.some((f) => f.name === opts.marker)) order.push(opts.marker);
  for (const n of order) await fsp.rename(path.join(stage, n), path.join(target, n));
  const newSet = new Set(order);
  for (const n of owned.keys()) if (!newSet.has(n)) await fsp.rm(path.join(target, n), { force: true });
  await fsp.rename(path.join(stage, MANIFEST_NAME), path.join(target, MANIFEST_NAME));
  await fsp.rm(stage, { recursive: true, force: true });
  for (const n of foreign) opts.warn(keptLine(target, n));
}

/**
 * Add, replace (`text` given) or remove (`text` null) one file of a folder that several processes
 * update file by file (failed/: shards on other nodes write there too), and its manifest entry, under
 * the folder's commit lock. A foreign file of that name is never touched: one warning, and false.
 */
export async function updateOwnedFile(dir: string, name: string, text: string | null, command: BatchCommand, warn: Warn): Promise<boolean> {
  const file = path.join(dir, name);
  if (text === null && !existsSync(file)) return true;
  const unlock = await takeLock(dir, ownerTag(), dir, 'batch folder');
  try {
    const m = await manifestOrNull(dir, warn);
    if (!m && existsSync(path.join(dir, MANIFEST_NAME))) {
      if (existsSync(file)) return false; // damaged list: reported; the file cannot be proven ours
    }
    const listed = (m?.files ?? []).filter((f) => f.name === name);
    let ours = !existsSync(file);
    if (!ours && listed.length > 0) {
      const now = await entryOf(dir, name);
      ours = listed.some((f) => f.bytes === now.bytes && f.sha256 === now.sha256);
    }
    if (!ours) {
      warn(`kept ${file}: rhofield did not write it (or it was changed since), so it is neither ${text === null ? 'removed' : 'replaced'}; move it away`);
      return false;
    }
    const others = (m?.files ?? []).filter((f) => f.name !== name);
    const mf = path.join(dir, MANIFEST_NAME);
    if (text === null) {
      await fsp.rm(file, { force: true });
      await writeAtomic(mf, manifestText(command, 'complete', others));
      return true;
    }
    const bytes = Buffer.from(text);
    const entry: ManifestEntry = { name, bytes: bytes.length, sha256: createHash('sha256').update(bytes).digest('hex') };
    // listed before it appears (with the old version, if any), so every file of ours is accounted for at every instant
    await writeAtomic(mf, manifestText(command, 'committing', others.concat(listed, entry)));
    await writeAtomic(file, bytes);
    await writeAtomic(mf, manifestText(command, 'complete', others.concat(entry).sort((a, b) => a.name.localeCompare(b.name))));
    return true;
  } finally {
    unlock();
  }
}
