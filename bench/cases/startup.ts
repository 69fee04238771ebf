/**
 * Start-up: wall time of fresh processes of the built command, `node packages/cli/dist/bin/rhofield.js
 * --help` and `… plan --setup fixtures/demo/setup.json`, and of importing the built library
 * (`import('@rhofield/core')`, nothing used), each alternating with bare `node -e 0` in the same
 * rounds so that machine load hits all alike. Reports the medians, each one's ratio to `node -e 0`,
 * and the target (≤ 0.15 s median for --help and plan).
 *
 * Environment: RHOFIELD_BENCH_STARTUP_RUNS (rounds, default 15, at least 10). `pnpm bench` builds first.
 */
import { spawnSync } from 'node:child_process';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const name = 'startup';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const BIN = path.join(ROOT, 'packages/cli/dist/bin/rhofield.js');
const TARGET_S = 0.15;

const COMMANDS: Record<string, string[]> = {
  nodeBare: ['-e', '0'],
  help: [BIN, '--help'],
  plan: [BIN, 'plan', '--setup', 'fixtures/demo/setup.json'],
  importCore: ['--input-type=module', '-e', "await import('@rhofield/core')"],
};

function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

/** Wall time of one fresh process, seconds. */
function once(args: string[]): number {
  const t0 = process.hrtime.bigint();
  const r = spawnSync(process.execPath, args, { cwd: ROOT, stdio: ['ignore', 'ignore', 'pipe'], env: { ...process.env, CI: 'true' } });
  const s = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`node ${args.join(' ')} failed (exit ${r.status}): ${r.stderr}`);
  return s;
}

export async function run(): Promise<Record<string, unknown>> {
  const rounds = Math.max(10, Number(process.env['RHOFIELD_BENCH_STARTUP_RUNS']) || 15);
  // the machine is shared: absolute times scale with its load, the ratios much less
  const loadAvg1mAtStart = +os.loadavg()[0]!.toFixed(2);
  const times: Record<string, number[]> = Object.fromEntries(Object.keys(COMMANDS).map((k) => [k, []]));
  for (const k of Object.keys(COMMANDS)) once(COMMANDS[k]!); // warm the file cache
  for (let i = 0; i < rounds; i++) {
    for (const [k, args] of Object.entries(COMMANDS)) times[k]!.push(once(args));
  }
  const med = Object.fromEntries(Object.entries(times).map(([k, v]) => [k, +median(v).toFixed(4)])) as Record<string, number>;
  const bare = med['nodeBare']!;
  const ratio = (k: string): number => +(med[k]! / bare).toFixed(2);
  const result = {
    rounds,
    loadAvg1mAtStart,
    cpus: os.cpus().length,
    medianSeconds: med,
    ratioToNodeBare: { help: ratio('help'), plan: ratio('plan'), importCore: ratio('importCore') },
    targetSeconds: TARGET_S,
    meetsTarget: med['help']! <= TARGET_S && med['plan']! <= TARGET_S,
  };
  process.stderr.write(
    `startup, median of ${rounds} fresh processes each (alternating; 1-min load ${loadAvg1mAtStart} on ${os.cpus().length} cores):\n` +
      `  node -e 0                      ${bare.toFixed(3)} s\n` +
      `  rhofield --help                ${med['help']!.toFixed(3)} s  (${ratio('help')}× node -e 0)\n` +
      `  rhofield plan --setup demo     ${med['plan']!.toFixed(3)} s  (${ratio('plan')}× node -e 0)\n` +
      `  import('@rhofield/core')       ${med['importCore']!.toFixed(3)} s  (${ratio('importCore')}× node -e 0)\n` +
      `  target ≤ ${TARGET_S} s for --help and plan: ${result.meetsTarget ? 'met' : 'NOT met'}\n`,
  );
  return result;
}
