/**
 * A fixed-size worker-thread pool (piscina) for running one task per worker, used by batches: one
 * worker per core, each task single-threaded (`threads: 1`), so pools never nest.
 *
 * Lives in core because piscina is a dependency of this package. TypeScript worker files need the
 * tsx loader through `execArgv`: the callers take both from workerScript (util/workerScript.ts).
 */
import { Piscina } from 'piscina';

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
  const pool = new Piscina({ filename, minThreads: threads, maxThreads: threads, concurrentTasksPerWorker: 1, idleTimeout: 60_000, execArgv });
  return { run: (task) => pool.run(task) as Promise<unknown>, destroy: () => pool.destroy() };
}
