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
import { fileURLToPath } from 'node:url';
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
