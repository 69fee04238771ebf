/**
 * Worker task of the displacement engine (run through piscina): takes chunk numbers of one stage from
 * a shared atomic counter and runs them until none is left. The images and outputs live in
 * SharedArrayBuffers, so the task message shares memory instead of copying it. A worker belongs to the
 * pool of one engine and runs one task at a time, so its workspace (correlators, SIMD kernel memory)
 * serves one measurement at a time.
 */
import { EngineWorkspace, runChunk, type EngineImages, type EngineTask } from './engine.js';

/** This worker thread's scratch. */
const workspace = new EngineWorkspace();

export interface StageMessage {
  img: EngineImages;
  task: EngineTask;
  counter: Int32Array;
  n: number;
}

export default function runStage(m: StageMessage): number {
  let k: number;
  let done = 0;
  while ((k = Atomics.add(m.counter, 0, 1)) < m.n) {
    runChunk(m.img, m.task, k, workspace);
    done++;
  }
  return done;
}
