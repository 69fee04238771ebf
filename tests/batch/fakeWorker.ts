/** Pool worker running the fake processor (same shape as packages/cli/src/batch/worker.ts). */
import type { WorkerTask } from '../../packages/cli/src/batch/types.js';
import { processPair } from './fakePipeline.js';

export default function runPairTask(task: WorkerTask): Promise<Record<string, unknown>> {
  return processPair(task.job, task.outDir);
}
