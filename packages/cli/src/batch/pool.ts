/**
 * Where pairs run: a piscina worker pool (one worker per core by default, each pair with threads: 1 so
 * pools never nest), or the calling thread (tests).
 *
 * The pool is piscina, created by core's createWorkerPool; each worker starts from the task's worker
 * module as core's workerScript decides (compiled `.js`, or `.ts` with the tsx loader from sources).
 */
import os from 'node:os';
import { createWorkerPool, siblingWorkerUrl, workerScript } from '@rhofield/core';
import type { PairExecutor, PairSummaryLike, PairWork, ProcessPairFn } from './types.js';
import type { WorkerTask } from './types.js';

/** Default worker count: one per core. */
export function defaultWorkerCount(): number {
  return Math.max(1, typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length);
}

/** The worker module of the real pipeline (./worker.js, or ./worker.ts when running from sources). */
export const PIPELINE_WORKER = siblingWorkerUrl(import.meta.url, 'worker');

/**
 * A pool of `workers` worker threads (piscina, through core's createWorkerPool) running
 * `workerModule`, whose default export takes a {@link WorkerTask} and processes one pair.
 * @param workers number of threads (≥ 1).
 * @param workerModule file URL of the worker module (default: the real pipeline's worker).
 * @throws RhofieldError naming the worker module when it is missing.
 */
export function createPairPool(workers: number, workerModule: string = PIPELINE_WORKER): PairExecutor {
  const { filename, execArgv } = workerScript(workerModule);
  const pool = createWorkerPool(filename, workers, execArgv);
  return {
    concurrency: workers,
    run(job: PairWork, outDir: string): Promise<PairSummaryLike> {
      const task: WorkerTask = { job, outDir };
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
