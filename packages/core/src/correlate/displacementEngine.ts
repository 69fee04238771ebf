/**
 * The displacement engine: the memory and threads one measurement works with — the image buffers
 * (reused while the image size stays the same), the calling thread's workspace (correlators, SIMD
 * kernel memory) and a pool of worker threads (created on first use, resized on demand). Nothing of it
 * is shared with another engine, so measurements on different engines may run at the same time.
 *
 * Calls on one engine are serialised: `measure` queues behind the engine's running call (they share
 * its buffers and workers, so running them side by side would only split the same cores). For work in
 * parallel, use one engine per concurrent job (e.g. one per batch worker).
 *
 * Keeping an engine between calls saves the start of the workers (about 0.6 s) and the first writes
 * to fresh buffers. An idle engine does not keep the process alive (idle workers are unref'd);
 * `dispose()` frees its workers and buffers at once.
 */
import { invalidParameter, RhofieldError } from '../util/errors.js';
import type { Field } from '../util/field.js';
import { EngineWorkspace } from './engine.js';
import { runMeasurement, type DisplacementResult, type MeasureDisplacementOptions, type MeasureResources } from './measureDisplacement.js';
import { EnginePool } from './workerPool.js';

/** Options of {@link createDisplacementEngine}. */
export interface DisplacementEngineOptions {
  /**
   * Threads of the calls that do not set `threads` themselves (calling thread + workers); capped at
   * the machine's cores with a warning in the result. Default: as {@link measureDisplacement}
   * (the number of cores for images of 1 Mpx or more, else 1).
   */
  threads?: number;
}

interface Buffers {
  width: number;
  height: number;
  shared: boolean;
  /** Copies of the input images (allocated on first use: images already in shared memory need none). */
  inputs: Float32Array[] | null;
  bufs: Float32Array[];
  bins: Float32Array[];
  mask: Uint8Array;
}

/** Buffers, workspace and worker pool of displacement measurements; see the module comment. */
export class DisplacementEngine {
  /** Default threads of this engine's calls (undefined: by image size). */
  readonly threads: number | undefined;
  private readonly workspace = new EngineWorkspace();
  private cache: Buffers | null = null;
  private workers: EnginePool | null = null;
  private tail: Promise<unknown> = Promise.resolve();
  private closed = false;

  constructor(options: DisplacementEngineOptions = {}) {
    if (options === null || typeof options !== 'object') throw invalidParameter('options', 'an options object', options);
    const t = options.threads;
    if (t !== undefined && (!Number.isInteger(t) || t < 1 || t > 256)) throw invalidParameter('threads', 'an integer from 1 to 256', t);
    this.threads = t;
  }

  /** Whether {@link dispose} was called. */
  get disposed(): boolean {
    return this.closed;
  }

  /**
   * Measure the displacement between `ref` and `meas` with this engine's memory and workers (see
   * {@link measureDisplacement} for the method, options and result). Calls queue: each starts when the
   * previous one on this engine has finished.
   * @throws RhofieldError (usage) after {@link dispose}; otherwise as measureDisplacement.
   */
  measure(ref: Field, meas: Field, options: Omit<MeasureDisplacementOptions, 'engine'> = {}): Promise<DisplacementResult> {
    if (this.closed) return Promise.reject(new RhofieldError('usage', 'this displacement engine was disposed; create a new one with createDisplacementEngine()'));
    const run = this.tail.then(() => {
      if (this.closed) throw new RhofieldError('usage', 'this displacement engine was disposed; create a new one with createDisplacementEngine()');
      return runMeasurement(ref, meas, options, this.resources, this.threads);
    });
    this.tail = run.catch(() => undefined);
    return run;
  }

  /** Wait for queued calls, then end the workers and drop the buffers. Safe to call twice. */
  async dispose(): Promise<void> {
    this.closed = true;
    await this.tail;
    this.cache = null;
    const w = this.workers;
    this.workers = null;
    if (w) await w.close();
  }

  /** Drop the image buffers kept for the next call (the workers stay). */
  releaseBuffers(): void {
    this.cache = null;
  }

  private readonly resources: MeasureResources = {
    workspace: this.workspace,
    buffers: (width, height, shared) => this.buffers(width, height, shared),
    inputs: (width, height, shared) => this.inputs(width, height, shared),
    pool: (size) => this.pool(size),
  };

  private buffers(width: number, height: number, shared: boolean): Buffers {
    const c = this.cache;
    if (c && c.width === width && c.height === height && c.shared === shared) return c;
    this.cache = null;
    const n = width * height;
    const make = (m = n): Float32Array => (shared ? new Float32Array(new SharedArrayBuffer(4 * m)) : new Float32Array(m));
    const nb = (width >> 1) * (height >> 1);
    this.cache = {
      width,
      height,
      shared,
      inputs: null,
      bufs: [make(), make(), make(), make()],
      bins: [make(nb), make(nb)],
      mask: shared ? new Uint8Array(new SharedArrayBuffer(n)) : new Uint8Array(n),
    };
    return this.cache;
  }

  private inputs(width: number, height: number, shared: boolean): Float32Array[] {
    const c = this.buffers(width, height, shared);
    const n = width * height;
    c.inputs ??= shared ? [new Float32Array(new SharedArrayBuffer(4 * n)), new Float32Array(new SharedArrayBuffer(4 * n))] : [new Float32Array(n), new Float32Array(n)];
    return c.inputs;
  }

  private async pool(size: number): Promise<EnginePool> {
    if (this.workers && this.workers.size !== size) {
      const old = this.workers;
      this.workers = null;
      await old.close();
    }
    if (!this.workers) this.workers = new EnginePool(size);
    return this.workers;
  }
}

/**
 * A new displacement engine (buffers, workspace and worker threads owned by the caller).
 * @example
 * const engine = createDisplacementEngine({ threads: 2 });
 * try { for (const [a, b] of pairs) results.push(await engine.measure(a, b, { windowPx: 32 })); }
 * finally { await engine.dispose(); }
 */
export function createDisplacementEngine(options: DisplacementEngineOptions = {}): DisplacementEngine {
  return new DisplacementEngine(options);
}

/**
 * The idle default engine of {@link measureDisplacement} calls without an engine, or null. A call
 * takes it out (so no other call can use it at the same time) and puts it back when done; a second
 * concurrent call gets a fresh engine, disposed when it finishes if this slot is taken again.
 */
let idle: DisplacementEngine | null = null;

/** Run `fn` on a default engine that no other call uses meanwhile. */
export async function withDefaultEngine<T>(fn: (engine: DisplacementEngine) => Promise<T>): Promise<T> {
  const engine = idle ?? new DisplacementEngine();
  idle = null;
  try {
    return await fn(engine);
  } finally {
    if (idle === null) idle = engine;
    else await engine.dispose();
  }
}

/** Drop the buffers of the idle default engine (see {@link withDefaultEngine}). */
export function releaseDefaultBuffers(): void {
  idle?.releaseBuffers();
}

/**
 * End the idle default engine's worker threads and drop its buffers. Not needed for a process to
 * exit (idle workers do not keep it alive); kept for compatibility and to free memory early.
 */
export async function closeWorkers(): Promise<void> {
  const e = idle;
  idle = null;
  if (e) await e.dispose();
}
