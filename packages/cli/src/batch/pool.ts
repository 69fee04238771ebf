/**
 * Where pairs run: a piscina worker pool (one worker per core by default, each pair with threads: 1 so
 * pools never nest), or the calling thread (tests and --workers 0 debugging).
 *
 * The pool is piscina, created by core's createWorkerPool. TypeScript workers need the tsx loader passed explicitly through `execArgv` (TOOLCHAIN §6): workers
 * started under vitest or the bin shim do not inherit it otherwise.
 */
import os from 'node:os';
import { createWorkerPool } from '@rhofield/core';
import type { PairExecutor, PairSummaryLike, PairWork, ProcessPairFn } from './types.js';
import type { WorkerTask } from './types.js';

/** Default worker count: one per core. */
export function defaultWorkerCount(): number {
  return Math.max(1, typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length);
}

/** The worker module of the real pipeline (./worker.ts). */
export const PIPELINE_WORKER = new URL('./worker.ts', import.meta.url).href;

/**
 * A pool of `workers` worker threads running `workerModule`, whose default export takes a
 * {@link WorkerTask} and processes one pair. The worker module must import its processor statically:
 * a dynamic import() of a .ts URL inside a worker fails under the tsx loader.
 * @param workers number of threads (≥ 1).
 * @param workerModule file URL of the worker module (default: ./worker.ts, the real pipeline).
 */
export function createPairPool(workers: number, workerModule: string = PIPELINE_WORKER): PairExecutor {
  // piscina (through core, which depends on it); a pair at a time per worker
  const pool = createWorkerPool(workerModule, workers, ['--import', import.meta.resolve('tsx')]);
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
