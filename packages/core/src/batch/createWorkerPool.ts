/**
 * A fixed-size worker-thread pool (piscina) for running one task per worker, used by batches: one
 * worker per core, each task single-threaded (`threads: 1`), so pools never nest.
 *
 * Lives in core because piscina is a dependency of this package. TypeScript worker files need the
 * tsx loader through `execArgv`: the callers take both from workerScript (util/workerScript.ts).
 * While the pool's threads start, a compiled worker module is loaded once in a check thread
 * ({@link checkWorkerStarts}); tasks wait for it, and a module that cannot load fails every task
 * with one error naming it (instead of piscina's unhandled 'error' event and tasks waiting forever).
 */
import { Piscina } from 'piscina';
import { checkWorkerStarts } from '../util/workerScript.js';

/** The part of a pool the callers use. */
export interface WorkerPool {
  run(task: unknown): Promise<unknown>;
  destroy(): Promise<void>;
}

/**
 * @param filename file URL (or path) of the worker module; its default export handles one task.
 * @param threads number of worker threads (min = max = threads).
 * @param execArgv extra Node arguments for the workers (e.g. the tsx loader).
 */
export function createWorkerPool(filename: string, threads: number, execArgv: string[] = []): WorkerPool {
  const ready = checkWorkerStarts({ filename, execArgv });
  ready.catch(() => {}); // reported through run()
  const pool = new Piscina({ filename, minThreads: threads, maxThreads: threads, concurrentTasksPerWorker: 1, idleTimeout: 60_000, execArgv });
  pool.on('error', () => {}); // a worker that died while loading: the check above reports why
  return {
    run: async (task) => {
      await ready;
      return pool.run(task) as Promise<unknown>;
    },
    destroy: () => pool.destroy(),
  };
}
