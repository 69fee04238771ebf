/**
 * Deterministic sharding of a batch for cluster job arrays: shard K of N (K = 1…N) takes the K-th of N
 * contiguous blocks of the frame list, so that each shard's partial statistics cover a run of
 * consecutive frames and the merge combines them in frame order.
 */
import { invalidParameter } from '../util/errors.js';

/** Shard K of N (1-based). */
export interface ShardSpec {
  readonly index: number;
  readonly count: number;
}

/**
 * Parse `K/N` with 1 ≤ K ≤ N.
 * @throws RhofieldError (usage) naming `--shard`, e.g. for `3/2` or `0/4`.
 */
export function parseShard(text: string, name = '--shard'): ShardSpec {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) throw invalidParameter(name, 'K/N with integers 1 ≤ K ≤ N, e.g. 2/4', text);
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (count < 1 || index < 1 || index > count) {
    throw invalidParameter(name, 'K/N with integers 1 ≤ K ≤ N, e.g. 2/4', text, `K counts from 1 to N=${count}`);
  }
  return { index, count };
}

/**
 * The shard of a job-array task from SLURM's environment: K = SLURM_ARRAY_TASK_ID −
 * SLURM_ARRAY_TASK_MIN + 1, N = SLURM_ARRAY_TASK_COUNT. Returns undefined outside a job array.
 * @throws RhofieldError (usage) if the variables are present but inconsistent.
 */
export function shardFromEnv(env: Record<string, string | undefined>): ShardSpec | undefined {
  const id = env.SLURM_ARRAY_TASK_ID;
  const min = env.SLURM_ARRAY_TASK_MIN;
  const count = env.SLURM_ARRAY_TASK_COUNT;
  if (id === undefined || count === undefined) return undefined;
  const k = Number(id) - Number(min ?? 0) + 1;
  const n = Number(count);
  const text = `${k}/${n}`;
  if (!Number.isInteger(k) || !Number.isInteger(n)) {
    throw invalidParameter('SLURM_ARRAY_TASK_ID/MIN/COUNT', 'integers', `${id}/${min}/${count}`);
  }
  if (env.SLURM_ARRAY_TASK_STEP !== undefined && env.SLURM_ARRAY_TASK_STEP !== '1') {
    throw invalidParameter('SLURM_ARRAY_TASK_STEP', 'a job array with step 1 (e.g. --array=1-4)', env.SLURM_ARRAY_TASK_STEP, 'or pass --shard K/N explicitly');
  }
  return parseShard(text, 'the SLURM job-array task');
}

/** Half-open index range [start, end) of shard `s` over `total` items (contiguous, sizes differ by ≤ 1). */
export function shardBounds(total: number, s: ShardSpec): { start: number; end: number } {
  return { start: Math.floor(((s.index - 1) * total) / s.count), end: Math.floor((s.index * total) / s.count) };
}

/** The items of shard `s`, in order. */
export function selectShard<T>(items: readonly T[], s: ShardSpec | undefined): T[] {
  if (!s) return items.slice();
  const { start, end } = shardBounds(items.length, s);
  return items.slice(start, end);
}
