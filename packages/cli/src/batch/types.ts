/**
 * Types shared by the batch runner, the worker pool and the worker. The per-pair work follows the
 * contract of `processPair(job, outDir)` in ../pipeline.ts: it writes one pair's results into an
 * existing empty folder and returns a small JSON-able summary.
 */

/** What one pair's processing receives (paths and pages only: images are loaded by the worker). */
export interface PairWork {
  readonly refPath: string;
  readonly measPath: string;
  readonly refPage?: number;
  readonly measPage?: number;
  /** Processing options (displacement settings, optional setup, formats, threads: 1). */
  readonly options: Record<string, unknown> & { threads?: number };
}

/** A small JSON-able summary returned by the per-pair processor. */
export type PairSummaryLike = Record<string, unknown>;

/** The per-pair processor: writes results into `outDir` (existing, empty) and returns a summary. */
export type ProcessPairFn = (job: PairWork, outDir: string) => Promise<PairSummaryLike>;

/** Runs pairs somewhere (in this thread, or in a worker pool). */
export interface PairExecutor {
  /** Number of pairs it works on at once. */
  readonly concurrency: number;
  run(job: PairWork, outDir: string): Promise<PairSummaryLike>;
  close(): Promise<void>;
}

/** Image header facts used to check frames before processing. */
export interface ImageProbe {
  readonly width: number;
  readonly height: number;
  /** Number of pages (1 for single images). */
  readonly pages: number;
}

/** Reads an image header (no pixel data); `page` selects a page of a stack. */
export type ProbeFn = (file: string, page?: number) => Promise<ImageProbe>;

/** One task posted to a pool worker: paths only; the worker loads the images itself. */
export interface WorkerTask {
  readonly job: PairWork;
  readonly outDir: string;
}
