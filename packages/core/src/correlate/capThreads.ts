/**
 * Thread counts against the machine: more threads than cores only add contention (measured: a 256²
 * pair with 64 threads on 2 cores took 29 s and 1.9 GB instead of about 1 s), so a larger request is
 * capped at the cores with a warning.
 */
import os from 'node:os';

/** Cores available to this process (`os.availableParallelism()`, else the CPU count; at least 1). */
export function availableCores(): number {
  return Math.max(1, typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length);
}

/**
 * `requested` threads capped at {@link availableCores}, with the warning to show when capped.
 * @param requested thread count asked for (integer ≥ 1).
 * @param label how the caller's user named the setting, e.g. `threads` or `--threads`.
 * @returns `{ threads, warning }`: warning null when not capped, else e.g. "threads 64 exceeds the 2 cores; using 2".
 */
export function capThreads(requested: number, label = 'threads'): { threads: number; warning: string | null } {
  const cores = availableCores();
  if (requested <= cores) return { threads: requested, warning: null };
  return { threads: cores, warning: `${label} ${requested} exceeds the ${cores} core${cores === 1 ? '' : 's'}; using ${cores}` };
}
