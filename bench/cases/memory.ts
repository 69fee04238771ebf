/**
 * Memory and size guards, end to end through the CLI in child processes (peak RSS from getrusage):
 * - a 16000² pair under `--max-memory 2GiB` is refused from its headers (target: ≤ 2 s, ≤ 300 MB peak RSS);
 * - `displacement --window 16 --step 1` on a 640×480 pair (290,625 vectors) completes: time and peak RSS;
 * - `--threads 64` on a 256² pair is capped at the cores (before the cap: 29 s and 1.9 GB on 2 cores).
 * Medians over several runs (the machine may be shared).
 */
import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { estimateMemory, saveImage16, synthPair } from '@rhofield/core';

export const name = 'memory';

type SharpLike = (input: unknown) => { greyscale(): { png(o: unknown): { toFile(f: string): Promise<unknown> } } };
const sharp = createRequire(new URL('../../packages/core/package.json', import.meta.url))('sharp') as SharpLike;
const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const BIN = path.join(ROOT, 'packages/cli/dist/bin/rhofield.js');
const PEAK = 'data:text/javascript,process.on("exit",()=>process.stderr.write("peak-rss-kB "+process.resourceUsage().maxRSS+"\\n"))';

function runCli(args: string[]): { code: number | null; seconds: number; peakMB: number; err: string } {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, ['--import', PEAK, BIN].concat(args), { cwd: ROOT, encoding: 'utf8' });
  const seconds = (performance.now() - t0) / 1000;
  const m = /peak-rss-kB (\d+)/.exec(r.stderr);
  return { code: r.status, seconds: +seconds.toFixed(2), peakMB: m ? +((1024 * Number(m[1])) / 1e6).toFixed(0) : NaN, err: r.stderr.split('\n')[0] ?? '' };
}

function median(v: number[]): number {
  const s = Array.from(v).sort((a, b) => a - b);
  const h = s.length >> 1;
  return s.length % 2 ? s[h]! : (s[h - 1]! + s[h]!) / 2;
}

export async function run(): Promise<Record<string, unknown>> {
  const dir = mkdtempSync(path.join(os.tmpdir(), 'rhofield-bench-memory-'));
  try {
    const bigA = path.join(dir, 'big-ref.png');
    const bigB = path.join(dir, 'big-meas.png');
    await sharp({ create: { width: 16000, height: 16000, channels: 3, background: { r: 40, g: 40, b: 40 } } }).greyscale().png({ compressionLevel: 9 }).toFile(bigA);
    copyFileSync(bigA, bigB);
    const refusals = [1, 2, 3, 4, 5].map(() => runCli(['displacement', bigA, bigB, '--out', path.join(dir, 'big-out'), '--max-memory', '2GiB']));
    const refusal = {
      exitCodes: refusals.map((r) => r.code),
      medianSeconds: median(refusals.map((r) => r.seconds)),
      maxPeakMB: refusals.reduce((m, r) => Math.max(m, r.peakMB), 0),
      message: refusals[0]!.err,
      estimateGiB: +(estimateMemory({ width: 16000, height: 16000, bitDepth: 8 }).bytes / 2 ** 30).toFixed(2),
    };
    process.stderr.write(`16000² refusal: exit ${refusal.exitCodes.join(',')}, median ${refusal.medianSeconds} s, peak ≤ ${refusal.maxPeakMB} MB (target ≤ 2 s, ≤ 300 MB)\n`);

    const { ref, meas } = synthPair({ width: 640, height: 480, diameterPx: 2.8, seed: 5, displacement: { kind: 'sine', amplitudePx: 1.5, wavelengthPx: 128, along: 'x', component: 'dy' } });
    const a = path.join(dir, 'ref640.png');
    const b = path.join(dir, 'meas640.png');
    await saveImage16(ref, a);
    await saveImage16(meas, b);
    const dense = [1, 2, 3].map((i) => runCli(['displacement', a, b, '--window', '16', '--step', '1', '--out', path.join(dir, `dense${i}`), '--quiet']));
    const vectors300k = {
      vectors: 625 * 465,
      exitCodes: dense.map((r) => r.code),
      medianSeconds: median(dense.map((r) => r.seconds)),
      medianPeakMB: median(dense.map((r) => r.peakMB)),
      estimateMB: +(estimateMemory({ width: 640, height: 480, windowPx: 16, stepPx: 1 }).bytes / 1e6).toFixed(0),
    };
    process.stderr.write(`290,625 vectors: exit ${vectors300k.exitCodes.join(',')}, median ${vectors300k.medianSeconds} s, peak ${vectors300k.medianPeakMB} MB\n`);

    const s = synthPair({ width: 256, height: 256, diameterPx: 2.8, seed: 6, displacement: { kind: 'uniform', dx: 1, dy: 0.5 } });
    const c = path.join(dir, 'ref256.png');
    const d = path.join(dir, 'meas256.png');
    await saveImage16(s.ref, c);
    await saveImage16(s.meas, d);
    const many = [1, 2, 3].map((i) => runCli(['displacement', c, d, '--threads', '64', '--out', path.join(dir, `t64-${i}`), '--quiet']));
    const threads64 = { cores: os.availableParallelism(), warning: many[0]!.err, medianSeconds: median(many.map((r) => r.seconds)), medianPeakMB: median(many.map((r) => r.peakMB)) };
    process.stderr.write(`--threads 64 on 256²: ${threads64.warning}; median ${threads64.medianSeconds} s, peak ${threads64.medianPeakMB} MB\n`);
    return { refusal16000: refusal, vectors300k, threads64 };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
