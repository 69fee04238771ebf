/**
 * The worker threads of one {@link DisplacementEngine} (piscina). Each engine owns its pool; nothing
 * here is shared between engines. Piscina unrefs idle workers, so an idle pool never keeps a process
 * alive; `engine.dispose()` ends the workers early.
 *
 * Workers are TypeScript modules: they get the tsx loader through `execArgv`
 * (`['--import', import.meta.resolve('tsx')]`, TOOLCHAIN §6), which works under tsx, vitest and the
 * CLI shim alike.
 */
import { Piscina } from 'piscina';
import { RhofieldError } from '../util/errors.js';
import { chunkCount, runChunk, type EngineImages, type EngineTask, type EngineWorkspace } from './engine.js';
import type { StageMessage } from './correlate.worker.js';

/** A pool of `size` worker threads for the stages of one engine. */
export class EnginePool {
  readonly size: number;
  private readonly pool: Piscina;

  constructor(size: number) {
    this.size = size;
    this.pool = new Piscina({
      filename: new URL('./correlate.worker.ts', import.meta.url).href,
      minThreads: size,
      maxThreads: size,
      concurrentTasksPerWorker: 1,
      idleTimeout: 10 * 60_000,
      execArgv: ['--import', import.meta.resolve('tsx')],
    });
  }

  /**
   * Run all chunks of a task on the workers and the calling thread together (chunks are taken from a
   * shared counter, so a slow or still-starting worker simply takes fewer).
   */
  async stage(img: EngineImages, task: EngineTask, ws: EngineWorkspace): Promise<void> {
    const n = chunkCount(img, task);
    const counter = new Int32Array(new SharedArrayBuffer(4));
    const msg: StageMessage = { img, task, counter, n };
    const done: Promise<unknown>[] = [];
    for (let i = 0; i < this.size; i++) done.push(this.pool.run(msg));
    let k: number;
    while ((k = Atomics.add(counter, 0, 1)) < n) runChunk(img, task, k, ws);
    try {
      await Promise.all(done);
    } catch (e) {
      throw new RhofieldError('processing', `displacement worker failed: ${e instanceof Error ? e.message : String(e)}`);
    }
  }

  close(): Promise<void> {
    return this.pool.destroy();
  }
}

