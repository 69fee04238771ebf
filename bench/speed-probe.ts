/**
 * Quick development probe (not a bench case): 2048², 32 px windows, 50 % overlap, default passes,
 * 2 threads; prints median wall time, vectors/s and per-stage ms. `npx tsx bench/speed-probe.ts [size] [threads]`.
 */
import { closeWorkers, measureDisplacement, synthPair } from '@rhofield/core';

const size = Number(process.argv[2] ?? 2048);
const threads = Number(process.argv[3] ?? 2);
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
console.log(`median ${ms.toFixed(0)} ms  ${Math.round((n / ms) * 1000)} vectors/s  runs ${times.map((t) => t.toFixed(0)).join(' ')}`);
console.log(JSON.stringify({ setup: last!.timingsMs.setup, prefilter: last!.timingsMs.prefilter, passes: last!.passes.map((p) => p.ms) }));
await closeWorkers();
