/**
 * The CLI's shard selection from SLURM's environment and the emitted job script, without a scheduler
 * (the per-pair work is the fake processor, so only the batch logic runs).
 */
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, beforeAll, describe, expect, it } from 'vitest';
import { batchCommand } from '../../packages/cli/src/commands/batch.js';
import { inProcessExecutor } from '../../packages/cli/src/batch/pool.js';
import { processPair } from './fakePipeline.js';
import { writeSequence } from './synthFrames.js';

const base = mkdtempSync(path.join(os.tmpdir(), 'rf-shardenv-'));
let seq: { reference: string; pattern: string };
const saved = { ...process.env };
beforeAll(async () => {
  seq = await writeSequence(path.join(base, 'f'), { size: 64, frames: 6 });
});
afterEach(() => {
  for (const k of Object.keys(process.env)) if (k.startsWith('SLURM_') && !(k in saved)) delete process.env[k];
  process.exitCode = undefined;
});

describe('rhofield batch inside a job array', () => {
  it('takes K = TASK_ID − TASK_MIN + 1 and N = TASK_COUNT from SLURM env and processes that contiguous third', async () => {
    Object.assign(process.env, { SLURM_ARRAY_TASK_ID: '5', SLURM_ARRAY_TASK_MIN: '4', SLURM_ARRAY_TASK_COUNT: '3', SLURM_ARRAY_TASK_STEP: '1' });
    const out = path.join(base, 'env');
    const code = await batchCommand({ reference: seq.reference, frames: seq.pattern, out, quiet: true }, () => inProcessExecutor(processPair));
    expect(code).toBe(0);
    expect(readdirSync(path.join(out, 'shards'))).toEqual(['2-of-3']);
    expect(readdirSync(path.join(out, 'pairs')).sort()).toEqual(['frame_00002', 'frame_00003']);
    // an explicit --shard wins over the environment
    const code2 = await batchCommand({ reference: seq.reference, frames: seq.pattern, out, quiet: true, shard: '3/3' }, () => inProcessExecutor(processPair));
    expect(code2).toBe(0);
    expect(readdirSync(path.join(out, 'shards')).sort()).toEqual(['2-of-3', '3-of-3']);
  });

  it('--emit-job-script writes an sbatch array script that reruns the same command without --shard', async () => {
    const out = path.join(base, 'emit');
    const script = path.join(base, 'job.sh');
    const code = await batchCommand({ reference: seq.reference, frames: seq.pattern, out, window: '16', quiet: true, emitJobScript: script, arrayTasks: '3' });
    expect(code).toBe(0);
    const text = readFileSync(script, 'utf8');
    expect(text).toMatch(/^#!\/bin\/bash\n/);
    expect(text).toMatch(/\n#SBATCH --array=1-3\n/);
    expect(text).toMatch(/\n#SBATCH --cpus-per-task=1\n/);
    expect(text).toContain(`#SBATCH --output=${out}/logs/task-%A_%a.out`);
    expect(text).toMatch(/\nexec \S+node\S* \S+rhofield\.js batch --frames \S+frame_%05d\.png --out \S+ --reference \S+ref\.png --window 16 --workers 1 --quiet\n/);
    expect(text.split('\n').find((l) => l.startsWith('exec '))).not.toMatch(/--shard|--force|--emit-job-script|--array-tasks/);
    await expect(batchCommand({ reference: seq.reference, frames: seq.pattern, out, emitJobScript: script, arrayTasks: '9', quiet: true })).rejects.toThrow(
      /at most the number of pairs \(6\) for --array-tasks but received 9/,
    );
    // #SBATCH lines cannot hold a path with spaces: refused with the option named, no script written
    const spaced = path.join(base, 'with space');
    const script2 = path.join(base, 'job2.sh');
    await expect(batchCommand({ reference: seq.reference, frames: seq.pattern, out: spaced, emitJobScript: script2, arrayTasks: '2', quiet: true })).rejects.toThrow(/--out.*without spaces/);
    expect(readdirSync(base)).not.toContain('job2.sh');
  });
});
