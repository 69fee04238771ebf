// Pool worker entry (plain JS): registers the tsx loader inside this worker thread, then loads the
// TypeScript worker module named by the task and runs it. Passing the loader through execArgv
// (`--import tsx`) stops working as soon as the worker's module graph contains h5wasm/node (the io
// stage imports it): the worker then fails with ERR_UNKNOWN_FILE_EXTENSION on its .ts entry.
import { register } from 'tsx/esm/api';

register();
const loaded = new Map();

export default async function runTask(task) {
  let run = loaded.get(task.workerModule);
  if (!run) {
    const mod = await import(task.workerModule);
    run = mod.default;
    if (typeof run !== 'function') throw new Error(`${task.workerModule} has no default export to run`);
    loaded.set(task.workerModule, run);
  }
  return run(task);
}
