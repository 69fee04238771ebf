/**
 * Where pairs run: a piscina worker pool (one worker per core by default, each pair with threads: 1 so
 * pools never nest), or the calling thread (tests).
 *
 * The pool is piscina, created by core's createWorkerPool; its workers start from workerEntry.mjs,
 * which registers the tsx loader in each thread (see createPairPool for why not execArgv).
 */
import { existsSync } from 'node:fs';
import os from 'node:os';
import { fileURLToPath } from 'node:url';
import { RhofieldError, createWorkerPool } from '@rhofield/core';
import type { PairExecutor, PairSummaryLike, PairWork, ProcessPairFn } from './types.js';
import type { WorkerTask } from './types.js';

/** Default worker count: one per core. */
export function defaultWorkerCount(): number {
  return Math.max(1, typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length);
}

/** The worker module of the real pipeline (./worker.ts). */
export const PIPELINE_WORKER = new URL('./worker.ts', import.meta.url).href;
/** Plain-JS entry of every pool worker: registers tsx in the thread, then loads the task's module. */
const WORKER_ENTRY = new URL('./workerEntry.mjs', import.meta.url).href;

/**
 * A pool of `workers` worker threads (piscina, through core's createWorkerPool) running
 * `workerModule`, whose default export takes a {@link WorkerTask} and processes one pair.
 *
 * Deviation from the usual `execArgv: ['--import', tsx]` recipe (TOOLCHAIN §6): with h5wasm/node in
 * the worker's module graph that recipe fails (ERR_UNKNOWN_FILE_EXTENSION), so the workers start
 * from a plain-JS entry that calls tsx's `register()` itself (see workerEntry.mjs).
 * @param workers number of threads (≥ 1).
 * @param workerModule file URL of the worker module (default: ./worker.ts, the real pipeline).
 */
export function createPairPool(workers: number, workerModule: string = PIPELINE_WORKER): PairExecutor {
  if (workerModule.startsWith('file:') && !existsSync(fileURLToPath(workerModule))) {
    throw new RhofieldError('processing', `the per-pair worker ${fileURLToPath(workerModule)} is missing from this checkout; batch cannot process pairs`);
  }
  const pool = createWorkerPool(WORKER_ENTRY, workers);
  return {
    concurrency: workers,
    run(job: PairWork, outDir: string): Promise<PairSummaryLike> {
      const task: WorkerTask = { job, outDir, workerModule };
      return pool.run(task) as Promise<PairSummaryLike>;
    },
    async close(): Promise<void> {
      await pool.destroy();
    },
  };
}

/** Run pairs in the calling thread, `concurrency` at a time (no worker threads). */
export function inProcessExecutor(processPair: ProcessPairFn, concurrency = 1): PairExecutor {
  return {
    concurrency,
    run: (job, outDir) => processPair(job, outDir),
    close: async () => {},
  };
}
