/**
 * `rhofield batch`: displacement (and, with --setup, density) for a whole sequence of frames, on all
 * cores, resumable, with mean / standard-deviation statistics; shards for cluster job arrays.
 * The work lives in ../batch (runner, pool, statistics); this file parses options and reports.
 */
import { existsSync, mkdirSync, promises as fsp } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Command } from 'commander';
import cliProgress from 'cli-progress';
import {
  FIELD_SET_FORMATS,
  capThreads,
  PAIRING_MODES,
  CLI_PROCESS_BYTES,
  estimateMemory,
  invalidParameter,
  loadSetup,
  pairFrames,
  parseFrameRange,
  parseShard,
  shardFromEnv,
  type PairingMode,
  type PairJob,
  type ShardSpec,
} from '@rhofield/core';
import { EXIT, Log, parseIntOpt, provenance, sha256File, writeOutputFiles } from '../common.js';
import { DEFAULT_FORMATS } from '../pipeline.js';
import { warnSlowKernels } from '../kernelWarning.js';
import { pairOptionsFromCli } from './displacement.js';
import { resolveFrames } from '../batch/frames.js';
import { jobScript } from '../batch/jobScript.js';
import { createPairPool, defaultWorkerCount } from '../batch/pool.js';
import { probeImage } from '../batch/probeImage.js';
import { runBatch, type BatchResult } from '../batch/runner.js';
import type { PairExecutor } from '../batch/types.js';
import { BATCH_WORKER_BYTES, checkMemory, imageHeaders, MAX_MEMORY_HELP, memoryBudget } from '../memoryGuard.js';
import { describeCommand } from './index.js';

export interface BatchOpts {
  setup?: string;
  reference?: string;
  frames: string;
  pairing?: string;
  range?: string;
  out: string;
  window?: string;
  step?: string;
  passes?: string;
  mask?: string;
  flowFree?: string;
  format?: string;
  workers?: string;
  shard?: string;
  emitJobScript?: string;
  arrayTasks?: string;
  maxMemory?: string;
  force?: boolean;
  acceptMismatch?: boolean;
  json?: boolean;
  quiet?: boolean;
  verbose?: boolean;
}

const FORMATS: readonly string[] = FIELD_SET_FORMATS;
const DEFAULTS = { windowPx: 32, passes: 3, formats: DEFAULT_FORMATS.split(',') };

/**
 * The compiled command (dist/bin/rhofield.js of this package), used in emitted job scripts; from the
 * sources (tests) that is the built one next to them (`pnpm build`).
 */
const BIN = fileURLToPath(new URL(/\.ts$/.test(import.meta.url) ? '../../dist/bin/rhofield.js' : '../bin/rhofield.js', import.meta.url));

function parseFormats(raw: string | undefined): string[] {
  if (raw === undefined) return DEFAULTS.formats;
  const list = raw.split(',').map((s) => s.trim().toLowerCase()).filter(Boolean).map((s) => (s === 'hdf5' ? 'h5' : s));
  for (const f of list) if (!FORMATS.includes(f)) throw invalidParameter('--format', `a comma list of ${FORMATS.join(', ')}`, raw);
  if (!list.includes('npy')) list.unshift('npy'); // the statistics read the .npy results
  return Array.from(new Set(list));
}

/** Build the job list and the settings from the options (shared by the run and --emit-job-script). */
async function planFromOptions(o: BatchOpts, log: Log) {
  // the options of `rhofield displacement` / `density`, checked by the same code (threads: one per pair)
  const formats = parseFormats(o.format);
  const shared = pairOptionsFromCli({
    out: o.out,
    ...(o.window !== undefined ? { window: o.window } : {}),
    ...(o.step !== undefined ? { step: o.step } : {}),
    ...(o.passes !== undefined ? { passes: o.passes } : {}),
    ...(o.mask !== undefined ? { mask: o.mask } : {}),
    ...(o.flowFree !== undefined ? { flowFree: o.flowFree } : {}),
  });
  const windowPx = shared.windowPx ?? DEFAULTS.windowPx;
  const stepPx = shared.stepPx ?? Math.max(1, Math.floor(windowPx / 2));
  const passes = shared.passes ?? DEFAULTS.passes;
  const flowFreeRegionPx = shared.flowFreeRegionPx;
  const range = o.range !== undefined ? parseFrameRange(o.range) : undefined;
  if (o.pairing !== undefined && !(PAIRING_MODES as readonly string[]).includes(o.pairing)) {
    throw invalidParameter('--pairing', `one of ${PAIRING_MODES.join(', ')}`, o.pairing);
  }
  const frames = await resolveFrames('--frames', o.frames, range, probeImage, false);
  for (const m of frames.missing.slice(0, 3)) log.warn(`frame ${m} in --range does not exist; it is left out`);
  if (frames.missing.length > 3) log.warn(`… and ${frames.missing.length - 3} more missing frames in --range`);

  let mode: PairingMode;
  let refs: Awaited<ReturnType<typeof resolveFrames>> | null = null;
  if (o.reference === undefined) {
    mode = (o.pairing as PairingMode | undefined) ?? 'consecutive';
    if (mode !== 'consecutive') throw invalidParameter('--reference', `a reference image or pattern for --pairing ${mode}`, undefined, 'or use --pairing consecutive');
  } else {
    refs = await resolveFrames('--reference', o.reference, undefined, probeImage, true);
    mode = (o.pairing as PairingMode | undefined) ?? (refs.kind === 'file' ? 'single' : 'per-frame');
    if (mode === 'per-frame' && refs.kind !== 'file' && range) refs = await resolveFrames('--reference', o.reference, range, probeImage, true);
    if (mode === 'single' && refs.frames.length > 1) {
      log.warn(`--pairing single: --reference ${o.reference} matches ${refs.frames.length} images; using the first, ${refs.frames[0]!.path}${refs.frames[0]!.page !== undefined ? ` page ${refs.frames[0]!.page}` : ''}`);
      refs = { ...refs, frames: refs.frames.slice(0, 1) };
    }
  }
  const jobs: PairJob[] = pairFrames(mode, frames.frames, refs?.frames ?? []);

  let setup: unknown;
  let setupHash: string | undefined;
  if (o.setup !== undefined) {
    setup = loadSetup(o.setup);
    setupHash = await sha256File(o.setup);
  }
  const maskPath = o.mask !== undefined ? path.resolve(o.mask) : undefined;
  const maskHash = maskPath !== undefined ? await sha256File(maskPath).catch(() => {
    throw invalidParameter('--mask', 'a readable mask image', o.mask, 'check the path');
  }) : undefined;
  const refHash = mode === 'single' && jobs[0] ? await sha256File(jobs[0].refPath) : undefined;

  const pairOptions: Record<string, unknown> = {
    windowPx,
    stepPx,
    passes,
    ...(maskPath ? { maskPath } : {}),
    ...(flowFreeRegionPx ? { flowFreeRegionPx } : {}),
    ...(setup !== undefined ? { setup, setupPath: path.resolve(o.setup as string) } : {}),
    formats: formats.join(','),
    threads: 1,
    ...(o.acceptMismatch ? { acceptMismatch: true } : {}),
  };
  // everything that decides a pair's results; the frame list itself may grow between runs (--range)
  const settings: Record<string, unknown> = {
    command: o.setup !== undefined ? 'density' : 'displacement',
    pairing: mode,
    reference: o.reference !== undefined ? path.resolve(o.reference) : null,
    referenceSha256: refHash ?? null,
    windowPx,
    stepPx,
    passes,
    maskSha256: maskHash ?? null,
    flowFreeRegionPx: flowFreeRegionPx ?? null,
    setupSha256: setupHash ?? null,
    formats,
    ...(o.acceptMismatch ? { acceptMismatch: true } : {}),
  };
  return { jobs, mode, settings, pairOptions, framesKind: frames.kind };
}

/** A path for messages: relative when inside the working folder, else absolute. */
function shown(p: string): string {
  const r = path.relative(process.cwd(), p);
  return r && !r.startsWith('..') && !path.isAbsolute(r) ? r : p;
}

function resolveShard(o: BatchOpts): ShardSpec | undefined {
  if (o.shard !== undefined) return parseShard(o.shard);
  return shardFromEnv(process.env);
}

/**
 * Workers of a run on this machine: --workers, else SLURM_CPUS_PER_TASK, else one per core; more than
 * the cores only add contention, so a larger request is capped with one warning line (not for
 * --emit-job-script, whose workers run on the cluster's nodes).
 */
function workerCount(o: BatchOpts, log: Log): number {
  const env = Number(process.env.SLURM_CPUS_PER_TASK);
  const asked = parseIntOpt('--workers', o.workers, 1, 1024);
  const n = asked ?? (Number.isInteger(env) && env > 0 ? env : defaultWorkerCount());
  const cap = capThreads(n, asked !== undefined ? '--workers' : 'SLURM_CPUS_PER_TASK');
  if (cap.warning) log.warn(cap.warning);
  return cap.threads;
}

/** Arguments that reproduce this batch command in a job script (no --shard, --force, --emit…). */
function commandArgs(o: BatchOpts, workers: number): string[] {
  const a = ['batch', '--frames', o.frames, '--out', path.resolve(o.out)];
  const add = (flag: string, v: string | undefined) => {
    if (v !== undefined) a.push(flag, v);
  };
  add('--setup', o.setup);
  add('--reference', o.reference);
  add('--pairing', o.pairing);
  add('--range', o.range);
  add('--window', o.window);
  add('--step', o.step);
  add('--passes', o.passes);
  add('--mask', o.mask);
  add('--flow-free', o.flowFree);
  add('--format', o.format);
  add('--max-memory', o.maxMemory);
  if (o.acceptMismatch) a.push('--accept-mismatch');
  a.push('--workers', String(workers));
  if (o.json) a.push('--json');
  if (o.quiet) a.push('--quiet');
  if (o.verbose) a.push('--verbose');
  return a;
}

/** Run the batch command with parsed options; returns the exit code. Exported for tests. */
export async function batchCommand(o: BatchOpts, executorFactory?: (workers: number) => PairExecutor): Promise<number> {
  const log = new Log(o);
  const { jobs, mode, settings, pairOptions, framesKind } = await planFromOptions(o, log);
  const outDir = path.resolve(o.out);

  if (o.emitJobScript !== undefined) {
    const tasks = parseIntOpt('--array-tasks', o.arrayTasks, 1, 100000) ?? 4;
    if (tasks > jobs.length) throw invalidParameter('--array-tasks', `at most the number of pairs (${jobs.length})`, tasks);
    const workers = parseIntOpt('--workers', o.workers, 1, 1024) ?? 1;
    if (o.force) log.warn('--force is not passed to the job array (tasks would delete each other\'s results); remove the folder before submitting if you want a fresh run');
    mkdirSync(path.join(outDir, 'logs'), { recursive: true });
    const text = jobScript({ tasks, workersPerTask: workers, outDir, cwd: process.cwd(), command: [process.execPath, BIN].concat(commandArgs(o, workers)) });
    await writeOutputFiles([{ path: o.emitJobScript, data: text }], !!o.force, '--emit-job-script');
    await fsp.chmod(o.emitJobScript, 0o755);
    log.info(`wrote ${o.emitJobScript}: a job array of ${tasks} tasks over ${jobs.length} pairs; submit it with sbatch, then run: rhofield merge ${o.out}`);
    log.json({ command: 'batch', jobScript: path.resolve(o.emitJobScript), tasks, pairs: jobs.length, out: outDir });
    return EXIT.ok;
  }

  const shard = resolveShard(o);
  const workers = workerCount(o, log);
  // working set: the main process plus, per worker, its runtime and one pair (threads 1), estimated from
  // the first pair's headers before any pixel is decoded
  const budget = memoryBudget(o.maxMemory);
  if (jobs[0]) {
    const first = jobs[0];
    const head = await imageHeaders(first.refPath, first.measPath);
    const pair = estimateMemory({ ...head, windowPx: pairOptions['windowPx'] as number, stepPx: pairOptions['stepPx'] as number, passes: pairOptions['passes'] as number, threads: 1, masked: o.mask !== undefined, density: o.setup !== undefined, processBytes: 0 });
    const total = CLI_PROCESS_BYTES + workers * (BATCH_WORKER_BYTES + pair.bytes);
    checkMemory(`${workers} worker(s) on pairs of ${head.width}×${head.height} px (${first.refPath})`, pair, budget, total, workers > 1 ? 'fewer --workers' : null);
  }
  warnSlowKernels(log);
  log.debug(`${jobs.length} pairs (${mode} pairing, frames from a ${framesKind === 'stack' ? 'multi-page stack' : framesKind === 'file' ? 'single file' : `${framesKind} pattern`}); ${workers} worker(s)${shard ? `; shard ${shard.index}/${shard.count}` : ''}`);

  const showBar = !!process.stderr.isTTY && !o.quiet && !o.json && !o.verbose;
  const bar = showBar
    ? new cliProgress.SingleBar(
        { format: 'pairs {bar} {value}/{total} | {percentage}% | {rate} pairs/s | ETA {eta_formatted}', stream: process.stderr, hideCursor: true, etaBuffer: 20 },
        cliProgress.Presets.shades_classic,
      )
    : null;
  const t0 = performance.now();
  const executor = executorFactory ? executorFactory(workers) : createPairPool(workers);
  let result: BatchResult;
  try {
    result = await runBatch(
      { outDir, jobs, ...(shard ? { shard } : {}), settings, pairOptions, force: !!o.force },
      executor,
      {
        probe: probeImage,
        onStart: (e) => {
          if (e.skipped) log.info(`resuming: ${e.skipped} of ${e.total} pairs already finished`);
          bar?.start(e.todo, 0, { rate: '0.00' });
        },
        onPair: (e) => {
          if (bar) bar.update(e.done, { rate: (e.done / ((performance.now() - t0) / 1000)).toFixed(2) });
          if (!e.ok && !bar) log.warn(`pair ${e.id} failed: ${e.error}`);
          else log.debug(`pair ${e.id} ${e.ok ? 'done' : 'failed'} (${e.done}/${e.total})`);
        },
        debug: (m) => log.debug(m),
        // paths inside --out as the user typed it
        warn: (m) => log.warn(outDir === o.out ? m : m.split(outDir + path.sep).join(path.join(o.out, path.sep)).split(outDir).join(o.out)),
      },
      provenance(),
    );
  } finally {
    bar?.stop();
    await executor.close();
  }

  const rate = result.pairsPerSecond;
  log.info(
    `${result.processed} pair(s) processed in ${result.processSeconds.toFixed(1)} s: ${rate.toFixed(2)} pairs/s with ${workers} worker(s)` +
      (result.skipped ? `; ${result.skipped} already finished` : '') +
      (shard ? ` [shard ${shard.index}/${shard.count}: ${result.pairsInShard} of ${jobs.length} pairs]` : ''),
  );
  if (result.statistics) {
    log.info(`statistics over ${result.statistics.pairsUsed} pair(s): ${shown(result.statistics.folder)}`);
    if (shard) log.info(`when all ${shard.count} shards have finished: rhofield merge ${o.out}`);
  }
  if (result.failed.length) {
    log.warn(`${result.failed.length} pair(s) failed (records in ${path.join(o.out, 'failed')}):`);
    for (const f of result.failed) process.stderr.write(`  ${f.id}: ${f.error}\n`);
  }
  if (result.stoppedBecause) process.stderr.write(`rhofield: error: batch stopped: ${result.stoppedBecause}\n`);
  log.json({
    command: 'batch',
    out: outDir,
    pairs: jobs.length,
    pairing: mode,
    shard: shard ?? null,
    workers,
    pairsInShard: result.pairsInShard,
    processed: result.processed,
    skipped: result.skipped,
    failed: result.failed,
    stoppedBecause: result.stoppedBecause ?? null,
    seconds: +result.processSeconds.toFixed(3),
    pairsPerSecond: +rate.toFixed(4),
    statistics: result.statistics,
    settingsHash: result.settingsHash,
    totalSeconds: +((performance.now() - t0) / 1000).toFixed(3),
  });
  return result.failed.length || result.stoppedBecause ? EXIT.failed : EXIT.ok;
}

export function register(program: Command): void {
  program
    .command('batch')
    .description(describeCommand('batch'))
    .requiredOption('--frames <pattern>', 'measured frames: numbered pattern (frame_%05d.tif), quoted wildcard pattern ("run/*.png") or multi-page TIFF')
    .requiredOption('--out <dir>', 'batch output folder (created; reused to resume)')
    .option('--reference <file|pattern>', 'reference image for all frames, or a pattern/stack with one reference per frame')
    .option('--pairing <mode>', `single (one reference), per-frame, or consecutive (frame i vs i+1); default from --reference, consecutive without it`)
    .option('--range <first:last[:step]>', 'frames to use, inclusive: %d numbers, stack pages (from 0) or positions in the sorted wildcard matches (from 0)')
    .option('--setup <file>', 'setup file (JSON, see docs/setup.md): also compute density; without it, displacement only')
    .option('--window <px>', `final interrogation window side, px (power of two, 16–128; default ${DEFAULTS.windowPx})`)
    .option('--step <px>', 'grid spacing between window centres, px (default window/2)')
    .option('--passes <n>', `number of correlation passes, 1–12 (default ${DEFAULTS.passes}; schedule: rhofield displacement --help)`)
    .option('--mask <file>', 'mask image: non-zero pixels are measured, zero pixels ignored')
    .option('--flow-free <x0,y0,x1,y1>', 'region without flow (px) used to remove camera shake')
    .option('--format <list>', `result formats per pair, comma list of ${FORMATS.join(', ')} (default ${DEFAULTS.formats.join(',')}; npy is always written)`)
    .option('--workers <n>', 'worker threads, one pair each (default: one per core, or SLURM_CPUS_PER_TASK; capped at the cores, except in --emit-job-script)')
    .option('--max-memory <size>', MAX_MEMORY_HELP)
    .option('--shard <K/N>', 'process only the K-th of N contiguous parts of the frames (default from SLURM_ARRAY_TASK_* when set)')
    .option('--emit-job-script <file>', 'write a SLURM sbatch script running this batch as a job array, then exit')
    .option('--array-tasks <n>', 'number of job-array tasks for --emit-job-script (default 4)')
    .option('--force', 'discard existing results in --out first: only files rhofield wrote, other files stay (refused with --shard)')
    .option('--accept-mismatch', 'keep pairs whose two images do not show the same background (by default such a pair is recorded as failed; see rhofield displacement --help)')
    .option('--json', 'print a JSON summary on stdout')
    .option('--quiet', 'no messages on stderr except warnings and errors')
    .option('--verbose', 'per-pair messages and stack traces')
    .addHelpText(
      'after',
      `
Output folder:
  run.json                settings and their hash; other settings are refused (--force discards)
  pairs/<frame id>/       one finished pair (written to a temporary folder, then renamed)
  failed/<frame id>.json  error of a failed pair (retried by the next run)
  statistics/             displacement_mean|std|count.npy, density_mean|std|count.npy, statistics.json
  shards/<K>-of-<N>/      partial statistics of one shard; combine with: rhofield merge OUT
  Each folder lists the files rhofield wrote in .rhofield-manifest.json; only those are ever replaced.

Examples:
  rhofield batch --reference ref.tif --frames "run1/frame_%05d.tif" --setup setup.json --out out/run1
  rhofield batch --frames stack.tif --pairing consecutive --range 0:99 --out out/stack
  rhofield batch ... --emit-job-script job.sh --array-tasks 8 && sbatch job.sh   # then: rhofield merge OUT
Exit codes: 0 all pairs done, 1 some pair failed (listed) or the disk filled up, 2 usage or input error.`,
    )
    .action(async (o: BatchOpts) => {
      process.exitCode = await batchCommand(o);
    });
}
