/**
 * The progress bar of the single-pair commands appears only on a terminal (a pseudo-terminal from
 * util-linux `script` here) and never under CI or in pipes.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';

const root = path.resolve(import.meta.dirname, '../..');
const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-progress-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));
const hasScript = existsSync('/usr/bin/script');
// the built command, as installed (`pnpm test` builds first)
const bin = path.join(root, 'packages/cli/dist/bin/rhofield.js');

function demo(out: string): string[] {
  return [process.execPath, bin, 'displacement', 'fixtures/demo/reference.png', 'fixtures/demo/measurement.png', '--out', out];
}

describe('progress bar', () => {
  it.skipIf(!hasScript)('is drawn on a terminal, and not when CI=true', () => {
    const env: NodeJS.ProcessEnv = { ...process.env, RHOFIELD_PROGRESS_DELAY_MS: '0' };
    delete env['CI'];
    const tty = spawnSync('/usr/bin/script', ['-qec', demo(path.join(tmp, 'a')).join(' '), '/dev/null'], { cwd: root, env, encoding: 'utf8', timeout: 100_000 });
    expect(tty.status, tty.stdout).toBe(0);
    expect(tty.stdout).toMatch(/rhofield .*\d+% \| (loading images|measuring displacement|writing displacement files)/);
    const ci = spawnSync('/usr/bin/script', ['-qec', demo(path.join(tmp, 'b')).join(' '), '/dev/null'], {
      cwd: root,
      env: { ...env, CI: 'true' },
      encoding: 'utf8',
      timeout: 100_000,
    });
    expect(ci.status, ci.stdout).toBe(0);
    expect(ci.stdout).not.toMatch(/\d+% \|/);
  });

  it('is not drawn into a pipe', () => {
    const env: NodeJS.ProcessEnv = { ...process.env, RHOFIELD_PROGRESS_DELAY_MS: '0' };
    delete env['CI'];
    const [cmd, ...args] = demo(path.join(tmp, 'c'));
    const r = spawnSync(cmd!, args, { cwd: root, env, encoding: 'utf8', timeout: 100_000 });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).not.toMatch(/\d+% \|/);
    expect(r.stderr).toMatch(/vectors: \d+ valid/);
  });
});
