/**
 * The batch runner: claims an output folder for one set of settings, processes the pairs that are not
 * finished yet (in a pool), records failures and goes on, then accumulates statistics in frame order.
 *
 * Safety rules:
 * - each pair is processed into a staging folder DIR/pairs/.<id>.partial-<tag> and renamed to
 *   DIR/pairs/<id> when complete, so a killed run leaves only staging folders, which the next run
 *   removes and redoes;
 * - DIR/run.json records the settings and their SHA-256; a run with other settings refuses the folder
 *   (--force discards the old results first), so results of different settings never mix;
 * - a failed pair is recorded in DIR/failed/<id>.json and retried by the next run; a full or
 *   read-only disk stops the run (no later pair could be written) without touching finished pairs;
 * - every folder with files of the batch lists them in its `.rhofield-manifest.json` (see owned.ts):
 *   --force, the redo of an unfinished pair and new statistics remove only listed files, so a file the
 *   user put into DIR/pairs/<id>/, DIR/statistics/, DIR/failed/ or DIR/shards/… stays (with a warning).
 */
import { createHash } from 'node:crypto';
import { existsSync, promises as fsp } from 'node:fs';
import path from 'node:path';
import { RhofieldError, selectShard, settingsHash as hashSettings, type PairJob, type ShardSpec } from '@rhofield/core';
import { isBatchEntry, isStorageFull, layout } from './folders.js';
import { removeOnInterrupt } from '../outputs.js';
import { installFolder, recordFolder, removeOwned, removeOwnedFolders, updateOwnedFile, type Warn } from './owned.js';
import { accumulatePairs, mergePartials, pairFinished, writePartial, writeStatistics } from './statistics.js';
import type { ImageProbe, PairExecutor, PairSummaryLike, ProbeFn } from './types.js';

export interface BatchPlan {
  readonly outDir: string;
  /** All pairs of the run in frame order (every shard sees the same list). */
  readonly jobs: readonly PairJob[];
  readonly shard?: ShardSpec;
  /** Everything that decides the results (hashed into run.json). */
  readonly settings: Record<string, unknown>;
  /** Options handed to each pair's processor. */
  readonly pairOptions: Record<string, unknown>;
  readonly force?: boolean;
}

export interface BatchHooks {
  readonly probe: ProbeFn;
  /** Called after each pair (done counts finished + failed in this run). */
  readonly onPair?: (e: { id: string; ok: boolean; done: number; total: number; error?: string }) => void;
  readonly onStart?: (e: { total: number; skipped: number; todo: number }) => void;
  readonly debug?: (msg: string) => void;
  /** One warning line (a file of the user's kept in a batch folder, …); default: none. */
  readonly warn?: Warn;
}

export interface BatchResult {
  readonly settingsHash: string;
  readonly jobsHash: string;
  readonly shard?: ShardSpec;
  readonly pairsInShard: number;
  readonly skipped: number;
  readonly processed: number;
  readonly failed: Array<{ id: string; error: string }>;
  /** Set when the run stopped early (disk full / read-only). */
  readonly stoppedBecause?: string;
  readonly processSeconds: number;
  readonly pairsPerSecond: number;
  /** Where the statistics went: DIR/statistics, or the shard's partial folder. */
  readonly statistics: { folder: string; pairsUsed: number } | null;
}

/** SHA-256 of the ordered job list (ids and inputs): shards of one run must agree on it. */
export function jobsHash(jobs: readonly PairJob[]): string {
  const h = createHash('sha256');
  for (const j of jobs) h.update(`${j.id}\0${j.refPath}\0${j.refPage ?? ''}\0${j.measPath}\0${j.measPage ?? ''}\n`);
  return h.digest('hex');
}

interface Manifest {
  kind: 'rhofield-batch';
  settingsHash: string;
  settings: Record<string, unknown>;
  createdUtc: string;
  tool: Record<string, unknown>;
}

/** Read run.json; a damaged one is an input error naming the file (it is written atomically, so only an outside edit damages it). */
async function readManifest(file: string): Promise<Partial<Manifest>> {
  try {
    const m = JSON.parse(await fsp.readFile(file, 'utf8')) as Partial<Manifest>;
    if (m && typeof m === 'object' && typeof m.settingsHash === 'string') return m;
  } catch {
    /* reported below */
  }
  throw new RhofieldError('input', `${file} is not a readable batch manifest; restore it, or discard the folder's results with --force`);
}

/**
 * Claim DIR for these settings: create run.json (atomically, exclusive so that concurrent shards
 * agree), or check that the existing one has the same settings hash.
 */
export async function claimFolder(dir: string, settings: Record<string, unknown>, force: boolean, shard: ShardSpec | undefined, tool: Record<string, unknown>, warn: Warn = () => {}): Promise<string> {
  const hash = hashSettings(settings);
  const mf = layout.manifest(dir);
  if (existsSync(dir)) {
    const st = await fsp.stat(dir);
    if (!st.isDirectory()) throw new RhofieldError('usage', `--out ${dir} exists and is not a folder; choose another path`);
    // logs/ may be made by --emit-job-script before the first task; run.json.tmp-* is a claim killed mid-way
    // other files (the user's frames, notes) may share the folder: only the batch's own names matter
    const entries = (await fsp.readdir(dir)).filter((e) => e !== 'logs' && !e.startsWith('run.json.tmp-') && isBatchEntry(e));
    // a damaged run.json still marks a batch folder, which --force may discard
    const existing = existsSync(mf) ? await readManifest(mf).catch((e: unknown) => (force ? ({ settingsHash: '' } as Partial<Manifest>) : Promise.reject(e))) : null;
    const same = existing?.kind === 'rhofield-batch' && existing.settingsHash === hash;
    if (entries.length > 0 && !existing) {
      // even with --force: only a batch folder's own entries are ever deleted
      throw new RhofieldError('usage', `--out ${dir} holds ${path.join(dir, entries[0]!)}, which is not from a batch run (no run.json); rhofield never replaces it, even with --force: move it away or choose another folder`);
    }
    if (force && entries.length > 0) {
      if (shard) {
        throw new RhofieldError('usage', `--force with --shard (or inside a job array) would delete other shards' results; remove ${dir} before submitting, or drop --force`);
      }
      // the batch's own entries only (see folders.ts), and in them only the files the batch wrote
      // (owned.ts); run.json last so that a killed --force stays a batch folder
      for (const e of entries) if (e !== 'run.json') await discardEntry(dir, e, warn);
      await fsp.rm(mf, { force: true });
    } else if (existing && !same) {
      throw new RhofieldError(
        'usage',
        `--out ${dir} holds batch results made with other settings (settings hash ${String(existing.settingsHash).slice(0, 12)}…, this run ${hash.slice(0, 12)}…); pass --force to discard them, or choose another --out`,
      );
    }
  }
  await fsp.mkdir(dir, { recursive: true });
  if (!existsSync(mf)) {
    const m: Manifest = { kind: 'rhofield-batch', settingsHash: hash, settings, createdUtc: new Date().toISOString(), tool };
    const tmp = `${mf}.tmp-${process.pid}-${Date.now()}`;
    await fsp.writeFile(tmp, JSON.stringify(m, null, 2) + '\n');
    try {
      await fsp.link(tmp, mf); // exclusive: fails if another shard created it meanwhile
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
      const other = JSON.parse(await fsp.readFile(mf, 'utf8')) as Manifest;
      if (other.settingsHash !== hash) throw new RhofieldError('usage', `--out ${dir} was claimed meanwhile by a run with other settings; choose another --out`);
    } finally {
      await fsp.rm(tmp, { force: true });
    }
  }
  await fsp.mkdir(layout.pairs(dir), { recursive: true });
  await fsp.mkdir(layout.failed(dir), { recursive: true });
  return hash;
}

/** A warning sink that passes each distinct line once (a kept file is met when emptying and again when refilling its folder). */
function onceEach(warn: Warn | undefined): Warn {
  const seen = new Set<string>();
  return (m) => {
    if (seen.has(m)) return;
    seen.add(m);
    warn?.(m);
  };
}

/** A staging folder of a pair (`.<id>.partial-<tag>`) or of a shard's statistics (`<K>-of-<N>.partial-<tag>`). */
function isStagingName(name: string): boolean {
  return /^\..+\.partial-[^/]*$/.test(name) || /^\d+-of-\d+\.partial-/.test(name);
}

/** Discard one top-level entry of a batch folder for --force, keeping every file the batch did not write. */
async function discardEntry(dir: string, name: string, warn: Warn): Promise<void> {
  const p = path.join(dir, name);
  if (/^statistics\.partial-/.test(name)) await fsp.rm(p, { recursive: true, force: true });
  else if (name === 'pairs' || name === 'shards') await removeOwnedFolders(p, isStagingName, warn);
  else if (/^(statistics(\.old-.*)?|failed)$/.test(name)) await removeOwned(p, warn);
}

/** The result formats recorded in a run's settings (statistics are written in the same ones). */
function formatsOf(settings: Record<string, unknown> | undefined): string[] {
  const f = settings?.['formats'];
  return Array.isArray(f) && f.every((x) => typeof x === 'string') ? (f as string[]) : ['npy'];
}

/** The storage error's code (ENOSPC, EDQUOT, EROFS), for messages that must not name a staging file. */
function storageCode(e: unknown): string {
  const code = (e as NodeJS.ErrnoException | undefined)?.code;
  if (typeof code === 'string') return code;
  return /ENOSPC|EDQUOT|EROFS/.exec(errorText(e))?.[0] ?? 'no space or read-only';
}

function errorText(e: unknown): string {
  return (e instanceof Error ? e.message : String(e)).split('\n')[0] ?? 'unknown error';
}

/**
 * Run a batch (or one shard of it) with the given executor.
 * @throws RhofieldError (usage/input) before any pair runs if the folder is refused or the first
 *   reference cannot be read.
 */
export async function runBatch(plan: BatchPlan, executor: PairExecutor, hooks: BatchHooks, tool: Record<string, unknown> = {}): Promise<BatchResult> {
  const dir = path.resolve(plan.outDir);
  const warn = onceEach(hooks.warn);
  const hash = await claimFolder(dir, plan.settings, !!plan.force, plan.shard, tool, warn);
  const jHash = jobsHash(plan.jobs);
  const mine = selectShard(plan.jobs, plan.shard);
  const pairsDir = layout.pairs(dir);

  // the run's frame size: the first reference of the whole list (the same for every shard)
  const first = plan.jobs[0];
  const runSize: ImageProbe | null = first ? await hooks.probe(first.refPath, first.refPage) : null;

  // leftovers of a killed run, by pair id: staging folders (.<id>.partial-<tag>) and final folders without pair.json
  const entries = await fsp.readdir(pairsDir);
  const existing = new Set(entries);
  const leftovers = new Map<string, string[]>();
  for (const name of entries) {
    const cut = name.startsWith('.') ? name.lastIndexOf('.partial-') : -1;
    if (cut > 0) {
      const id = name.slice(1, cut);
      leftovers.set(id, (leftovers.get(id) ?? []).concat(name));
    }
  }
  const todo: PairJob[] = [];
  for (const j of mine) {
    if (existing.has(j.id) && (await pairFinished(dir, j.id, hash))) continue;
    todo.push(j);
    for (const name of leftovers.get(j.id) ?? []) {
      hooks.debug?.(`removing unfinished ${name}`);
      await fsp.rm(path.join(pairsDir, name), { recursive: true, force: true });
    }
    // a pair folder without pair.json: only the files the batch wrote go (the user's stay, and the redone pair joins them)
    if (existing.has(j.id)) {
      hooks.debug?.(`removing unfinished ${j.id}`);
      await removeOwned(layout.pair(dir, j.id), warn);
    }
  }
  const skipped = mine.length - todo.length;
  hooks.onStart?.({ total: mine.length, skipped, todo: todo.length });

  const failed: Array<{ id: string; error: string }> = [];
  let processed = 0;
  let done = 0;
  let stoppedBecause: string | undefined;
  const tag = `${process.pid}-${Date.now().toString(36)}`;

  const onePair = async (j: PairJob): Promise<void> => {
    const stage = layout.staging(dir, j.id, tag);
    let release = (): void => {};
    try {
      if (runSize) {
        for (const [p, pg] of [
          [j.refPath, j.refPage],
          [j.measPath, j.measPage],
        ] as const) {
          const s = await hooks.probe(p, pg);
          if (s.width !== runSize.width || s.height !== runSize.height) {
            throw new RhofieldError(
              'input',
              `${p}${pg !== undefined ? ` page ${pg}` : ''} is ${s.width}×${s.height} px but this run's frames are ${runSize.width}×${runSize.height} px (size of ${first!.refPath}); frames of one run must have one size`,
            );
          }
        }
      }
      await fsp.mkdir(stage);
      release = removeOnInterrupt(stage);
      const t0 = performance.now();
      const summary: PairSummaryLike = await executor.run(
        { refPath: j.refPath, measPath: j.measPath, ...(j.refPage !== undefined ? { refPage: j.refPage } : {}), ...(j.measPage !== undefined ? { measPage: j.measPage } : {}), options: plan.pairOptions },
        stage,
      );
      const record = { id: j.id, index: j.index, refPath: j.refPath, refPage: j.refPage, measPath: j.measPath, measPage: j.measPage, settingsHash: hash, seconds: +((performance.now() - t0) / 1000).toFixed(3), summary };
      await fsp.writeFile(path.join(stage, 'pair.json'), JSON.stringify(record, null, 2) + '\n');
      await recordFolder(stage, 'batch');
      await installFolder(stage, layout.pair(dir, j.id), { marker: 'pair.json', warn, asideName: `.${j.id}.old-${tag}` });
      await updateOwnedFile(layout.failed(dir), `${j.id}.json`, null, 'batch', warn);
      processed++;
      done++;
      hooks.onPair?.({ id: j.id, ok: true, done, total: todo.length });
    } catch (e) {
      await fsp.rm(stage, { recursive: true, force: true }).catch(() => {});
      const error = errorText(e);
      if (isStorageFull(e)) {
        stoppedBecause ??= `--out ${plan.outDir}: the disk is full or read-only (${storageCode(e)}); free space and rerun the same command to resume`;
      } else {
        failed.push({ id: j.id, error });
        try {
          const text = JSON.stringify({ id: j.id, refPath: j.refPath, measPath: j.measPath, refPage: j.refPage, measPage: j.measPage, error, at: new Date().toISOString() }, null, 2) + '\n';
          await updateOwnedFile(layout.failed(dir), `${j.id}.json`, text, 'batch', warn);
        } catch (we) {
          if (isStorageFull(we)) stoppedBecause ??= `--out ${plan.outDir}: the disk is full or read-only (${storageCode(we)}); free space and rerun the same command to resume`;
        }
      }
      done++;
      hooks.onPair?.({ id: j.id, ok: false, done, total: todo.length, error });
    } finally {
      release();
    }
  };

  const queue = todo.slice();
  const lanes = Math.max(1, Math.min(queue.length, executor.concurrency + 1));
  const t0 = performance.now();
  await Promise.all(
    Array.from({ length: lanes }, async () => {
      while (queue.length > 0 && !stoppedBecause) await onePair(queue.shift() as PairJob);
    }),
  );
  const processSeconds = (performance.now() - t0) / 1000;
  const order = new Map(mine.map((j, i) => [j.id, i]));
  failed.sort((a, b) => (order.get(a.id) ?? 0) - (order.get(b.id) ?? 0));

  let statistics: BatchResult['statistics'] = null;
  if (!stoppedBecause) {
    const { acc, mismatched } = await accumulatePairs(dir, mine.map((j) => j.id), hash);
    for (const m of mismatched) failed.push(m);
    const used = new Set(acc?.pairIds ?? []);
    const failedIds = mine.filter((j) => !used.has(j.id)).map((j) => j.id);
    try {
      if (plan.shard) {
        await writePartial(dir, acc, { shard: plan.shard, settingsHash: hash, jobsHash: jHash, pairsTotal: mine.length, failed: failedIds }, warn);
        statistics = { folder: layout.shard(dir, plan.shard.index, plan.shard.count), pairsUsed: acc?.pairIds.length ?? 0 };
      } else if (acc) {
        await writeStatistics(dir, acc, { settingsHash: hash, jobsHash: jHash, pairsTotal: mine.length, pairsUsed: acc.pairIds.length, failed: failedIds }, formatsOf(plan.settings), 'batch', warn);
        statistics = { folder: layout.statistics(dir), pairsUsed: acc.pairIds.length };
      }
    } catch (e) {
      if (!isStorageFull(e)) throw e;
      stoppedBecause = `the statistics could not be written: --out ${plan.outDir}: the disk is full or read-only (${storageCode(e)}); free space and rerun the same command`;
    }
  }
  return {
    settingsHash: hash,
    jobsHash: jHash,
    ...(plan.shard ? { shard: plan.shard } : {}),
    pairsInShard: mine.length,
    skipped,
    processed,
    failed,
    ...(stoppedBecause ? { stoppedBecause } : {}),
    processSeconds,
    pairsPerSecond: processSeconds > 0 ? processed / processSeconds : 0,
    statistics,
  };
}

/** Result of merging a job array's shards. */
export interface MergeResult {
  readonly shards: number;
  readonly pairsTotal: number;
  readonly pairsUsed: number;
  readonly failed: string[];
  readonly folder: string;
  readonly files: string[];
}

/**
 * Combine the partial statistics of every shard of DIR into DIR/statistics.
 * @throws RhofieldError (input) if DIR is not a batch folder, or shards are missing or inconsistent.
 */
export async function mergeBatch(outDir: string, warn: Warn = () => {}): Promise<MergeResult> {
  const dir = path.resolve(outDir);
  const mf = layout.manifest(dir);
  if (!existsSync(mf)) throw new RhofieldError('input', `${dir} is not a batch folder (no run.json); give the --out folder of a batch run`);
  const manifest = (await readManifest(mf)) as Manifest;
  const { acc, infos } = await mergePartials(dir, manifest.settingsHash);
  const failed = infos.flatMap((p) => p.failed);
  const pairsTotal = infos.reduce((a, p) => a + p.pairsTotal, 0);
  if (!acc) throw new RhofieldError('processing', `no pair of ${dir} finished in any shard; see ${layout.failed(dir)} for the errors`);
  const files = await writeStatistics(dir, acc, {
    settingsHash: manifest.settingsHash,
    jobsHash: infos[0]!.jobsHash,
    pairsTotal,
    pairsUsed: acc.pairIds.length,
    shards: infos.length,
    failed,
  }, formatsOf(manifest.settings), 'merge', onceEach(warn));
  return { shards: infos.length, pairsTotal, pairsUsed: acc.pairIds.length, failed, folder: layout.statistics(dir), files };
}
