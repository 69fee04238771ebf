/**
 * How every worker thread of the project starts (the displacement engine's pool and the batch pool).
 *
 * One rule, decided here from the file the worker is: a compiled `.js` module (the installed package,
 * `dist/`) starts as it is; a TypeScript module (running from the sources under tsx or vitest) starts
 * with the tsx loader and the `rhofield-source` export condition, so its own imports of
 * `@rhofield/*` resolve to the sources as well. A worker file that is not there is an error naming
 * the file, raised before any thread starts.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import { RhofieldError } from './errors.js';

/** What a worker pool needs to start a worker: the module's file URL and the Node arguments. */
export interface WorkerScript {
  filename: string;
  execArgv: string[];
}

/**
 * The worker module `baseName` next to the calling module: `baseName.js` when the caller is compiled
 * JavaScript, `baseName.ts` when it runs from the TypeScript sources.
 * @param callerUrl the caller's `import.meta.url`.
 * @param baseName file name without extension, e.g. `correlate.worker`.
 */
export function siblingWorkerUrl(callerUrl: string, baseName: string): string {
  const ext = /\.[cm]?ts$/.test(new URL(callerUrl).pathname) ? '.ts' : '.js';
  return new URL(`./${baseName}${ext}`, callerUrl).href;
}

/**
 * How to start the worker module at `workerUrl` (a file URL).
 * @throws RhofieldError (processing) when the file is missing, or when it is TypeScript and the tsx
 * loader cannot be found.
 */
export function workerScript(workerUrl: string): WorkerScript {
  const file = workerUrl.startsWith('file:') ? fileURLToPath(workerUrl) : workerUrl;
  if (!existsSync(file)) {
    throw new RhofieldError('processing', `cannot start a worker thread: its module ${file} is missing; reinstall the package (or run \`pnpm build\` in a checkout)`);
  }
  if (!/\.[cm]?ts$/.test(file)) return { filename: workerUrl, execArgv: [] };
  let tsx: string;
  try {
    tsx = import.meta.resolve('tsx');
  } catch {
    throw new RhofieldError('processing', `cannot start the TypeScript worker ${file}: the tsx loader is not installed; run the compiled package (\`pnpm build\`) instead`);
  }
  return { filename: workerUrl, execArgv: ['--conditions=rhofield-source', '--import', tsx] };
}

/**
 * Load a compiled worker module once in a throwaway worker thread, to turn a module that cannot load
 * (broken install, syntax error, missing dependency) into one clear error naming it — a pool's own
 * workers would otherwise die one by one, leaving queued tasks waiting. The module is only imported
 * (its default export is not called). TypeScript workers (sources under tsx, i.e. tests) are not
 * checked: tsx's loader reaches worker threads only through CommonJS `require`, as piscina loads them.
 * @throws RhofieldError (processing) naming the module and the loader's first message line.
 */
export function checkWorkerStarts(script: WorkerScript): Promise<void> {
  if (script.execArgv.length > 0) return Promise.resolve();
  const file = script.filename.startsWith('file:') ? fileURLToPath(script.filename) : script.filename;
  const url = script.filename.startsWith('file:') ? script.filename : pathToFileURL(script.filename).href;
  const code = `import(${JSON.stringify(url)}).then(() => require('node:worker_threads').parentPort.postMessage('loaded'))`;
  return new Promise((resolve, reject) => {
    const w = new Worker(code, { eval: true, stdout: true, stderr: true });
    let done = false;
    const finish = (e: unknown): void => {
      if (done) return;
      done = true;
      void w.terminate();
      if (e === null) resolve();
      else {
        const why = e instanceof Error ? e.message.split('\n')[0] : String(e);
        reject(new RhofieldError('processing', `cannot start a worker thread from ${file} (${why}); reinstall the package (in a checkout: pnpm build)`));
      }
    };
    w.once('message', () => finish(null));
    w.once('error', (e) => finish(e));
    w.once('exit', (c) => finish(new Error(`the thread exited with code ${c} while loading the module`)));
  });
}
