/**
 * Benchmark runner: `pnpm bench [name ...]` runs every module in bench/cases (or the named ones),
 * prints each one's report and writes all results to bench/results/latest.json (merged with the
 * previous file so that running one case keeps the others). Targets live here, not in unit tests.
 *
 * A case module exports `name: string` and `run(): Promise<Record<string, unknown>>`.
 */
import { existsSync, readdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));
const casesDir = path.join(here, 'cases');
const outFile = path.join(here, 'results', 'latest.json');

const wanted = process.argv.slice(2).filter((a) => !a.startsWith('-'));
const files = readdirSync(casesDir)
  .filter((f) => f.endsWith('.ts'))
  .sort();

let previous: Record<string, unknown> = {};
if (existsSync(outFile)) {
  try {
    previous = JSON.parse(readFileSync(outFile, 'utf8')).cases ?? {};
  } catch {
    previous = {};
  }
}
const cases: Record<string, unknown> = { ...previous };
for (const f of files) {
  const mod = (await import(pathToFileURL(path.join(casesDir, f)).href)) as {
    name: string;
    run: () => Promise<Record<string, unknown>>;
  };
  if (wanted.length && !wanted.includes(mod.name)) continue;
  process.stderr.write(`\n=== bench: ${mod.name} ===\n`);
  const t0 = performance.now();
  const result = await mod.run();
  cases[mod.name] = { ...result, wallSeconds: +((performance.now() - t0) / 1000).toFixed(1), at: new Date().toISOString() };
}
const report = {
  machine: { cpus: os.cpus().length, cpuModel: os.cpus()[0]?.model ?? 'unknown', node: process.version, totalMemGiB: +(os.totalmem() / 2 ** 30).toFixed(1) },
  cases,
};
const tmp = outFile + '.tmp';
writeFileSync(tmp, JSON.stringify(report, null, 2) + '\n');
renameSync(tmp, outFile);
process.stderr.write(`\nwrote ${path.relative(process.cwd(), outFile)}\n`);
