// Pool worker entry (plain JS): loads core's plain-JS dependencies natively, registers the tsx loader
// inside this worker thread, then loads the TypeScript worker module named by the task and runs it.
//
// Why not `execArgv: ['--import', 'tsx']`: that recipe stops working as soon as the worker's module
// graph contains h5wasm/node (the io stage imports it): the worker then fails with
// ERR_UNKNOWN_FILE_EXTENSION on its .ts entry.
// Why the preload: see packages/core/src/batch/preloadDependencies.mjs (about 600 MB less resident
// memory and 2 s less start-up per worker).
import { register } from 'tsx/esm/api';

// core's sources sit next to its package entry; resolving does not load the (TypeScript) entry
const coreEntry = import.meta.resolve('@rhofield/core');
const { preloadDependencies } = await import(new URL('./batch/preloadDependencies.mjs', coreEntry).href);
await preloadDependencies();
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
