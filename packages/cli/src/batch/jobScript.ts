/**
 * The sbatch script for running a batch as a SLURM job array: each array task runs the same
 * `rhofield batch` command; the task picks its shard from SLURM_ARRAY_TASK_ID / _MIN / _COUNT.
 */
import path from 'node:path';
import { invalidParameter } from '@rhofield/core';

/** Quote one argument for bash (single quotes). */
export function shellQuote(s: string): string {
  return /^[A-Za-z0-9_./:=@%+-]+$/.test(s) ? s : `'${s.replace(/'/g, `'\\''`)}'`;
}

export interface JobScriptSpec {
  /** Number of array tasks (shards). */
  readonly tasks: number;
  /** Worker threads per task (= CPUs requested per task). */
  readonly workersPerTask: number;
  /** Batch output folder (absolute). */
  readonly outDir: string;
  /** Working directory the command runs in (absolute). */
  readonly cwd: string;
  /** Program and arguments of the batch command (without --shard). */
  readonly command: readonly string[];
  readonly jobName?: string;
}

/** Text of a ready-to-submit sbatch script. */
export function jobScript(s: JobScriptSpec): string {
  const logs = path.join(s.outDir, 'logs');
  // #SBATCH lines are not shell lines: a path with white space cannot be written there reliably.
  if (/\s/.test(logs)) throw invalidParameter('--out', 'a folder path without spaces for --emit-job-script (SLURM #SBATCH lines cannot hold them)', s.outDir, 'choose a path without spaces or link one to it');
  return [
    '#!/bin/bash',
    `# rhofield batch as a job array of ${s.tasks} tasks; written by rhofield batch --emit-job-script.`,
    `# Submit with:  sbatch ${'<this file>'}`,
    `# Each task processes a contiguous 1/${s.tasks} of the frames into ${s.outDir};`,
    `# when all tasks have finished, combine their statistics with:  rhofield merge ${shellQuote(s.outDir)}`,
    `#SBATCH --job-name=${s.jobName ?? 'rhofield-batch'}`,
    `#SBATCH --array=1-${s.tasks}`,
    '#SBATCH --ntasks=1',
    `#SBATCH --cpus-per-task=${s.workersPerTask}`,
    `#SBATCH --output=${logs}/task-%A_%a.out`,
    'set -euo pipefail',
    `cd ${shellQuote(s.cwd)}`,
    `exec ${s.command.map(shellQuote).join(' ')}`,
    '',
  ].join('\n');
}
