/**
 * Pool worker of `rhofield batch` (the pool's worker module): runs the real per-pair pipeline
 * for one task, single-threaded (the batch passes threads: 1, so pools never nest).
 */
import { createDisplacementEngine } from '@rhofield/core';
import { processPair, type PairJob } from '../pipeline.js';
import type { PairSummaryLike, WorkerTask } from './types.js';

/** This worker thread's displacement engine, reused for every pair it processes (one pair at a time). */
const engine = createDisplacementEngine({ threads: 1 });

export default function runPairTask(task: WorkerTask): Promise<PairSummaryLike> {
  return processPair(task.job as unknown as PairJob, task.outDir, undefined, engine);
}
