/**
 * Batch throughput and memory: `rhofield batch` (real pipeline, CLI as a child process) over a
 * synthetic sequence of 1024×1024 frames against one reference, with 1 and 2 workers.
 *
 * Reports pairs/s per worker count (median over RHOFIELD_BENCH_BATCH_REPEATS runs), the speed-up,
 * and the child's peak resident memory (VmHWM from /proc) when 50 pairs had finished and at the end,
 * to show that memory stays flat as the run grows (pairs are streamed, not held).
 *
 * Environment: RHOFIELD_BENCH_BATCH_FRAMES (default 200), RHOFIELD_BENCH_BATCH_SIZE (default 1024),
 * RHOFIELD_BENCH_BATCH_REPEATS (default 1: a 200-pair run takes minutes), RHOFIELD_BENCH_BATCH_WORKERS
 * (default "1,2"), RHOFIELD_BENCH_CACHE (frame cache, default <tmp>/rhofield-bench-cache). Frames are
 * generated once per size/count into the cache and reused.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeSequence } from '../../tests/batch/synthFrames.js';

export const name = 'batch';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const BIN = path.join(ROOT, 'packages/cli/dist/bin/rhofield.js');

function env(key: string, dflt: number): number {
  const v = Number(process.env[key]);
  return Number.isFinite(v) && v > 0 ? v : dflt;
}

function hwmKiB(pid: number): number | null {
  try {
    const m = /VmHWM:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) : null;
  } catch {
    return null;
  }
}

interface OneRun {
  /** 1-minute load average of the machine when the run started (other jobs share the cores). */
  loadAvg1mAtStart: number;
  seconds: number;
  pairsPerSecond: number;
  peakRssMiBAt50: number | null;
  peakRssMiBAtEnd: number | null;
}

async function runOnce(reference: string, pattern: string, workers: number, frames: number): Promise<OneRun> {
  const out = mkdtempSync(path.join(os.tmpdir(), 'rf-bench-batch-'));
  const loadAvg1mAtStart = +os.loadavg()[0]!.toFixed(2);
  const child = spawn(process.execPath, [BIN, 'batch', '--reference', reference, '--frames', pattern, '--out', out, '--workers', String(workers), '--json', '--quiet'], {
    cwd: ROOT,
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  let stdout = '';
  child.stdout.on('data', (c) => (stdout += c));
  const pid = child.pid as number;
  let at50: number | null = null;
  let last: number | null = null;
  const timer = setInterval(() => {
    const h = hwmKiB(pid);
    if (h !== null) last = h;
    if (at50 === null && existsSync(path.join(out, 'pairs'))) {
      const done = readdirSync(path.join(out, 'pairs')).filter((n) => !n.startsWith('.')).length;
      if (done >= Math.min(50, frames)) at50 = h;
    }
  }, 100);
  const code = await new Promise<number>((r) => child.on('exit', (c) => r(c ?? -1)));
  clearInterval(timer);
  if (code !== 0) throw new Error(`rhofield batch exited with ${code}`);
  const s = JSON.parse(stdout) as { seconds: number; pairsPerSecond: number; processed: number };
  if (s.processed !== frames) throw new Error(`expected ${frames} processed pairs, got ${s.processed}`);
  rmSync(out, { recursive: true, force: true });
  const mib = (k: number | null) => (k === null ? null : +(k / 1024).toFixed(1));
  return { loadAvg1mAtStart, seconds: s.seconds, pairsPerSecond: s.pairsPerSecond, peakRssMiBAt50: mib(at50), peakRssMiBAtEnd: mib(last) };
}

const median = (v: number[]) => {
  const s = v.slice().sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
};

export async function run(): Promise<Record<string, unknown>> {
  const frames = env('RHOFIELD_BENCH_BATCH_FRAMES', 200);
  const size = env('RHOFIELD_BENCH_BATCH_SIZE', 1024);
  const repeats = env('RHOFIELD_BENCH_BATCH_REPEATS', 1);
  const workerCounts = (process.env.RHOFIELD_BENCH_BATCH_WORKERS ?? '1,2').split(',').map(Number);
  const cache = path.join(process.env.RHOFIELD_BENCH_CACHE ?? path.join(os.tmpdir(), 'rhofield-bench-cache'), `batch-${size}-${frames}`);
  const marker = path.join(cache, 'complete.json');
  const reference = path.join(cache, 'ref.png');
  const pattern = path.join(cache, 'frame_%05d.png');
  if (!existsSync(marker)) {
    process.stderr.write(`generating ${frames} frames of ${size}×${size} into ${cache} (once)\n`);
    const t0 = performance.now();
    await writeSequence(cache, { size, frames, seed: 11 });
    writeFileSync(marker, JSON.stringify({ size, frames, seconds: (performance.now() - t0) / 1000 }) + '\n');
  }
  const results: Record<string, unknown> = {};
  const rates: Record<number, number> = {};
  for (const w of workerCounts) {
    const runs: OneRun[] = [];
    for (let i = 0; i < repeats; i++) {
      process.stderr.write(`batch: ${frames} pairs, ${w} worker(s), run ${i + 1}/${repeats}\n`);
      runs.push(await runOnce(reference, pattern, w, frames));
    }
    rates[w] = median(runs.map((r) => r.pairsPerSecond));
    results[`workers${w}`] = { medianPairsPerSecond: +rates[w]!.toFixed(3), runs };
    process.stderr.write(`  ${w} worker(s): ${rates[w]!.toFixed(2)} pairs/s; peak RSS ${runs[0]!.peakRssMiBAt50} MiB at 50 pairs, ${runs[0]!.peakRssMiBAtEnd} MiB at ${frames}\n`);
  }
  const speedUp = rates[1] && rates[2] ? +(rates[2] / rates[1]).toFixed(2) : null;
  return {
    frames,
    size,
    repeats,
    cpus: os.cpus().length,
    ...results,
    speedUp2vs1: speedUp,
    note:
      'pairs/s = processed pairs / wall time of the processing phase (excludes start-up and statistics); memory = VmHWM of the CLI process (all worker threads); ' +
      'default pair options (window 32, 3 passes, formats npy,csv,png); the cores are shared with other jobs (see loadAvg1mAtStart), so timings are noisy',
  };
}
