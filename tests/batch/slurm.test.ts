/**
 * Job arrays for real: a local single-node SLURM cluster (.ci/slurm.sh, Debian's slurm-wlm) runs
 * `rhofield batch --emit-job-script` as an array of 3 tasks over a small synthetic sequence with the
 * real pipeline; `rhofield merge` combines the shards; the merged statistics must equal a
 * single-process run within 1e-6 relative (the tolerance).
 * Needs root (to start the scheduler); skipped otherwise, saying so.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { HAS_PIPELINE, ROOT, STAT_FILES, loadNpy, maxRelDiff, rhofield } from './cliHelpers.js';
import { writeSequence } from './synthFrames.js';

const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
const SLURM = path.join(ROOT, '.ci/slurm.sh');
if (!isRoot) console.warn('tests/batch/slurm.test.ts: SKIPPED - not running as root, so no local SLURM cluster can be started (.ci/run runs as root and does run it)');

function sh(cmd: string, args: string[]): string {
  return execFileSync(cmd, args, { encoding: 'utf8', timeout: 30_000 }).trim();
}

describe.skipIf(!isRoot || !HAS_PIPELINE)('rhofield batch as a SLURM job array (local cluster)', () => {
  let startedHere = false;
  beforeAll(() => {
    if (spawnSync(SLURM, ['status']).status !== 0) {
      const up = spawnSync(SLURM, ['up'], { encoding: 'utf8', timeout: 110_000 });
      if (up.status !== 0) throw new Error(`.ci/slurm.sh up failed:\n${up.stdout}\n${up.stderr}`);
      startedHere = true;
    }
  }, 120_000);
  afterAll(() => {
    if (startedHere) spawnSync(SLURM, ['down'], { timeout: 60_000 });
  }, 70_000);

  it('3 array tasks + rhofield merge equal one process (rel 1e-6), each task ran its own shard', async () => {
    const base = mkdtempSync(path.join(os.tmpdir(), 'rf-slurm-'));
    const seq = await writeSequence(path.join(base, 'frames'), { size: 128, frames: 7, seed: 5 });
    const common = ['--reference', seq.reference, '--frames', seq.pattern, '--window', '32', '--step', '16', '--passes', '1', '--format', 'npy'];
    const arrOut = path.join(base, 'array');
    const script = path.join(base, 'job.sh');
    const emit = rhofield(['batch', ...common, '--out', arrOut, '--emit-job-script', script, '--array-tasks', '3', '--workers', '1']);
    expect(emit.code, emit.stderr).toBe(0);
    expect(readFileSync(script, 'utf8')).toMatch(/#SBATCH --array=1-3/);

    const jid = sh('sbatch', ['--parsable', '--chdir', ROOT, script]).split(';')[0]!;
    // poll squeue (sbatch --wait backs off to tens of seconds); an unknown job id (already purged) counts as finished
    const pending = () => {
      const q = spawnSync('squeue', ['-h', '-j', jid], { encoding: 'utf8', timeout: 10_000 });
      return q.status === 0 && q.stdout.trim() !== '';
    };
    const end = Date.now() + 90_000;
    while (Date.now() < end && pending()) await new Promise((r) => setTimeout(r, 500));
    if (pending()) {
      spawnSync('scancel', [jid], { timeout: 10_000 });
      throw new Error(`job array ${jid} had not finished after 90 s (cancelled); squeue: ${spawnSync('squeue', ['-j', jid], { encoding: 'utf8' }).stdout}`);
    }
    const show = sh('scontrol', ['-o', 'show', 'job', jid]);
    const logs = () => readdirSync(path.join(arrOut, 'logs')).map((f) => readFileSync(path.join(arrOut, 'logs', f), 'utf8')).join('\n');
    const states = show.split('\n').map((l) => /JobState=(\w+)/.exec(l)?.[1]);
    expect(states, `task states; logs:\n${existsSync(path.join(arrOut, 'logs')) ? logs() : 'none'}`).toEqual(['COMPLETED', 'COMPLETED', 'COMPLETED']);
    expect(readdirSync(path.join(arrOut, 'shards')).sort()).toEqual(['1-of-3', '2-of-3', '3-of-3']);
    const shardPairs = [1, 2, 3].map((k) => JSON.parse(readFileSync(path.join(arrOut, `shards/${k}-of-3/partial.json`), 'utf8')).pairIds.length);
    expect(shardPairs).toEqual([2, 2, 3]);

    const merged = rhofield(['merge', arrOut, '--json']);
    expect(merged.code, merged.stderr).toBe(0);
    expect(JSON.parse(merged.stdout)).toMatchObject({ shards: 3, pairsUsed: 7 });

    const oneOut = path.join(base, 'single');
    const one = rhofield(['batch', ...common, '--out', oneOut, '--workers', '2', '--quiet']);
    expect(one.code, one.stderr).toBe(0);
    for (const f of STAT_FILES) {
      const rel = maxRelDiff(loadNpy(path.join(arrOut, `statistics/${f}.npy`)).data, loadNpy(path.join(oneOut, `statistics/${f}.npy`)).data);
      expect(rel, `${f}: merged job array vs single process, max relative difference`).toBeLessThanOrEqual(1e-6);
    }
  }, 120_000);
});
