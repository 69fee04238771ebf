/**
 * `rhofield merge DIR`: combine the partial statistics of a batch's shards (job-array tasks) into
 * DIR/statistics, in frame order, as if one process had run the whole batch.
 */
import path from 'node:path';
import type { Command } from 'commander';
import { RhofieldError } from '@rhofield/core';
import { EXIT, Log, storageError } from '../common.js';
import { mergeBatch } from '../batch/runner.js';
import { describeCommand } from './index.js';

interface MergeOpts {
  json?: boolean;
  quiet?: boolean;
  verbose?: boolean;
  force?: boolean;
}

/** Messages name the folder as the user typed it, not its absolute path. */
function asTyped(e: unknown, dir: string): unknown {
  if (!(e instanceof RhofieldError)) return e;
  const abs = path.resolve(dir);
  return abs === dir ? e : new RhofieldError(e.kind, e.message.split(abs + path.sep).join(path.join(dir, path.sep)).split(abs).join(dir));
}

export function register(program: Command): void {
  program
    .command('merge')
    .description(describeCommand('merge'))
    .argument('<dir>', 'the batch output folder (--out of the shards)')
    .option('--json', 'print a JSON summary on stdout')
    .option('--quiet', 'no messages on stderr except warnings and errors')
    .option('--verbose', 'stack traces on errors')
    .option('--force', 'accepted for uniformity; merge always replaces the files rhofield wrote in DIR/statistics (other files there stay)')
    .addHelpText('after', '\nExit codes: 0 merged, 1 merged but some pairs had failed (listed), 2 a shard is missing or inconsistent.')
    .action(async (dir: string, o: MergeOpts) => {
      const log = new Log(o);
      // a full or read-only disk names the batch folder, never the statistics' staging folder
      const abs = path.resolve(dir);
      const typed = (m: string): string => (abs === dir ? m : m.split(abs + path.sep).join(path.join(dir, path.sep)).split(abs).join(dir));
      const r = await mergeBatch(dir, (m) => log.warn(typed(m))).catch((e: unknown) => Promise.reject(asTyped(storageError(e, 'batch folder', dir), dir)));
      log.info(`merged ${r.shards} shard(s): statistics over ${r.pairsUsed} of ${r.pairsTotal} pairs in ${r.folder}`);
      if (r.failed.length) log.warn(`${r.failed.length} pair(s) are missing from the statistics (failed): ${r.failed.slice(0, 10).join(', ')}${r.failed.length > 10 ? ', …' : ''}`);
      log.json({ command: 'merge', dir: path.resolve(dir), ...r });
      process.exitCode = r.failed.length ? EXIT.failed : EXIT.ok;
    });
}
