/**
 * The long property-based run of the hostile-input checks (tests/hostile/fuzzProperties.ts): setup
 * values, setup files and image files mutated at random, RHOFIELD_FUZZ_RUNS cases per property
 * (default 4000, 12,000 in all, plus a fifth of that through the command line: plan and check). Target: 0 crashes — every case is either accepted or refused with a
 * one-line RhofieldError of kind usage/input. Reports the counts, the seeds and the first crash.
 */
import { fuzzCommandLine, fuzzImages, fuzzSetupFiles, fuzzSetupValues } from '../../tests/hostile/fuzzProperties.js';

export const name = 'fuzz';

export async function run(): Promise<Record<string, unknown>> {
  const runs = Number(process.env['RHOFIELD_FUZZ_RUNS'] ?? 4000);
  const seed = Number(process.env['RHOFIELD_FUZZ_SEED'] ?? Date.now() % 2 ** 31);
  const t0 = performance.now();
  const reports = [fuzzSetupValues(runs, seed), fuzzSetupFiles(runs, seed + 1), await fuzzImages(runs, seed + 2), await fuzzCommandLine(Math.ceil(runs / 5), seed + 3)];
  const cases = reports.reduce((a, r) => a + r.runs, 0);
  const crashes = reports.reduce((a, r) => a + r.crashes, 0);
  for (const r of reports) process.stderr.write(`${r.property}: ${r.runs} cases, ${r.accepted} accepted, ${r.refused} refused, ${r.crashes} crashes (seed ${r.seed})${r.firstCrash ? `\n  first crash: ${r.firstCrash}` : ''}\n`);
  process.stderr.write(`fuzz: ${cases} cases, ${crashes} crashes, ${((performance.now() - t0) / 1000).toFixed(1)} s — target 0 crashes: ${crashes === 0 ? 'PASS' : 'FAIL'}\n`);
  return { cases, crashes, pass: crashes === 0, properties: reports };
}
