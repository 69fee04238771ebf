/**
 * The API documentation builds from the doc comments (`pnpm run docs` = TypeDoc with typedoc.json);
 * here TypeDoc runs with --emit none so that the check writes nothing.
 */
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const root = path.resolve(import.meta.dirname, '..');

describe('API docs', () => {
  it('TypeDoc converts the library entry point without errors', () => {
    const r = spawnSync(process.execPath, [path.join(root, 'node_modules/typedoc/bin/typedoc'), '--options', 'typedoc.json', '--emit', 'none'], {
      cwd: root,
      encoding: 'utf8',
      timeout: 110_000,
    });
    expect(r.status, r.stdout + r.stderr).toBe(0);
    expect(r.stdout + r.stderr).toMatch(/Found 0 errors/);
  });
});
