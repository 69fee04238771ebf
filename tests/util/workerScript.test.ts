/** One rule for starting worker threads: compiled .js as it is, .ts sources with the tsx loader. */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { RhofieldError, siblingWorkerUrl, workerScript } from '@rhofield/core';

const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-worker-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

describe('workerScript', () => {
  it('takes the sibling with the caller\'s extension', () => {
    expect(siblingWorkerUrl('file:///p/dist/correlate/workerPool.js', 'correlate.worker')).toBe('file:///p/dist/correlate/correlate.worker.js');
    expect(siblingWorkerUrl('file:///p/src/correlate/workerPool.ts', 'correlate.worker')).toBe('file:///p/src/correlate/correlate.worker.ts');
  });

  it('starts compiled JavaScript as it is and TypeScript with the tsx loader and the source condition', () => {
    const js = path.join(tmp, 'w.js');
    const ts = path.join(tmp, 'w.ts');
    writeFileSync(js, 'export default () => 1;\n');
    writeFileSync(ts, 'export default (): number => 1;\n');
    expect(workerScript(pathToFileURL(js).href)).toEqual({ filename: pathToFileURL(js).href, execArgv: [] });
    const t = workerScript(pathToFileURL(ts).href);
    expect(t.execArgv.slice(0, 2)).toEqual(['--conditions=rhofield-source', '--import']);
    expect(t.execArgv[2]).toMatch(/tsx/);
  });

  it('a missing worker module is an error naming the file, before any thread starts', () => {
    const missing = path.join(tmp, 'gone.worker.js');
    let err: unknown;
    try {
      workerScript(pathToFileURL(missing).href);
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(RhofieldError);
    expect((err as RhofieldError).kind).toBe('processing');
    expect((err as RhofieldError).message).toContain(missing);
  });
});

describe('createWorkerPool', () => {
  it('a worker module that fails to load fails the tasks with one error naming it (no crash, no wait)', async () => {
    const broken = path.join(tmp, 'broken.worker.js');
    writeFileSync(broken, 'export default 1 +;\n'); // a syntax error
    const { createWorkerPool } = await import('@rhofield/core');
    const pool = createWorkerPool(pathToFileURL(broken).href, 2);
    try {
      const runs = [pool.run({}), pool.run({}), pool.run({})];
      for (const r of runs) {
        await expect(r).rejects.toThrow(RhofieldError);
        await expect(r).rejects.toThrow(`cannot start a worker thread from ${broken} (Unexpected token`);
      }
    } finally {
      await pool.destroy();
    }
  });

  it('a working worker module runs the tasks', async () => {
    const ok = path.join(tmp, 'ok.worker.mjs');
    writeFileSync(ok, 'export default (t) => t.n * 2;\n');
    const { createWorkerPool } = await import('@rhofield/core');
    const pool = createWorkerPool(pathToFileURL(ok).href, 2);
    try {
      expect(await Promise.all([1, 2, 3].map((n) => pool.run({ n })))).toEqual([2, 4, 6]);
    } finally {
      await pool.destroy();
    }
  });
});
