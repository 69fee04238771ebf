/**
 * Quick probe (not a bench case; the displacement case runs it in fresh processes to compare the
 * kernels): size² synthetic pair (default 2048), 32 px windows, 50 % overlap, default passes, 2 threads
 * unless given; median of 5 runs after a warm-up; prints wall time, vectors/s and per-stage ms, or one
 * JSON line with `--json`. `npx tsx bench/speed-probe.ts [size] [threads] [--json]`.
 */
import { closeWorkers, measureDisplacement, synthPair } from '@rhofield/core';

const args = process.argv.slice(2).filter((a) => a !== '--json');
const json = process.argv.includes('--json');
const size = Number(args[0] ?? 2048);
const threads = Number(args[1] ?? 2);
const { ref, meas } = synthPair({
  width: size, height: size, diameterPx: 2.8, dotsPerWindow: 10, seed: 3, bitDepth: 8, noiseSigma: 1,
  displacement: { kind: 'sine', amplitudePx: 3, wavelengthPx: 256, along: 'x', component: 'dy' },
});
await measureDisplacement(ref, meas, { threads });
const times: number[] = [];
let last;
for (let i = 0; i < 5; i++) {
  const t = performance.now();
  last = await measureDisplacement(ref, meas, { threads });
  times.push(performance.now() - t);
}
times.sort((a, b) => a - b);
const ms = times[2]!;
const n = last!.grid.cols * last!.grid.rows;
const r1 = (v: number): number => Math.round(v * 10) / 10;
const stages = { setup: r1(last!.timingsMs.setup), passes: last!.passes.map((p) => ({ deform: r1(p.ms.deform), correlate: r1(p.ms.correlate), validate: r1(p.ms.validate) })) };
if (json) console.log(JSON.stringify({ size, threads, medianMs: Math.round(ms), vectorsPerSecond: Math.round((n / ms) * 1000), runsMs: times.map(Math.round), stagesMs: stages }));
else {
  console.log(`median ${ms.toFixed(0)} ms  ${Math.round((n / ms) * 1000)} vectors/s  runs ${times.map((t) => t.toFixed(0)).join(' ')}`);
  console.log(JSON.stringify(stages));
}
await closeWorkers();
