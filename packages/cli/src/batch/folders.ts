/**
 * Layout of a batch output folder and the small file-system helpers the runner needs.
 *
 *   DIR/run.json                 manifest: settings and their hash (one settings set per folder)
 *   DIR/pairs/<frame id>/        one finished pair (appears atomically by rename; has pair.json)
 *   DIR/pairs/.<id>.partial-*    a pair in flight (removed or redone on the next run)
 *   DIR/failed/<frame id>.json   a failed pair: its error (retried on the next run)
 *   DIR/statistics/              mean/std/count fields of the run (or of the merged shards)
 *   DIR/shards/<K>-of-<N>/       partial statistics of one shard of a job array
 *   DIR/logs/                    scheduler output of job-array tasks
 *
 * Each folder that holds files of the batch (a pair's, statistics/, a shard's, failed/) lists them in
 * its `.rhofield-manifest.json` (see owned.ts); only those are ever replaced or removed.
 */
import { promises as fsp } from 'node:fs';
import path from 'node:path';

export const layout = {
  manifest: (dir: string) => path.join(dir, 'run.json'),
  pairs: (dir: string) => path.join(dir, 'pairs'),
  pair: (dir: string, id: string) => path.join(dir, 'pairs', id),
  pairRecord: (dir: string, id: string) => path.join(dir, 'pairs', id, 'pair.json'),
  staging: (dir: string, id: string, tag: string) => path.join(dir, 'pairs', `.${id}.partial-${tag}`),
  stagingPrefix: (id: string) => `.${id}.partial-`,
  failed: (dir: string) => path.join(dir, 'failed'),
  failedRecord: (dir: string, id: string) => path.join(dir, 'failed', `${id}.json`),
  statistics: (dir: string) => path.join(dir, 'statistics'),
  shards: (dir: string) => path.join(dir, 'shards'),
  shard: (dir: string, k: number, n: number) => path.join(dir, 'shards', `${k}-of-${n}`),
  logs: (dir: string) => path.join(dir, 'logs'),
};

/**
 * True for the names a batch writes at the top of its folder (including temporaries of killed runs):
 * the only entries `--force` empties, and in them only the files the batch wrote (owned.ts).
 */
export function isBatchEntry(name: string): boolean {
  return /^(run\.json(\.tmp-.*)?|pairs|failed|statistics(\.partial-.*|\.old-.*)?|shards)$/.test(name);
}

/** True if the error means the file system is full or read-only: no later pair can succeed either. */
export function isStorageFull(err: unknown): boolean {
  const code = (err as NodeJS.ErrnoException | undefined)?.code;
  if (code === 'ENOSPC' || code === 'EDQUOT' || code === 'EROFS') return true;
  const msg = err instanceof Error ? err.message : String(err);
  return /ENOSPC|EDQUOT|no space left on device|disk quota exceeded|read-only file system/i.test(msg);
}

/** Write a file atomically (temp file in the same folder + rename). */
export async function writeAtomic(file: string, data: string | Uint8Array): Promise<void> {
  const tmp = `${file}.tmp-${process.pid}-${Date.now()}-${Math.random().toString(36).slice(2, 8)}`;
  try {
    await fsp.writeFile(tmp, data);
    await fsp.rename(tmp, file);
  } catch (e) {
    await fsp.rm(tmp, { force: true }).catch(() => {});
    throw e;
  }
}
