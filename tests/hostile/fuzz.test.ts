/**
 * Bad input never crashes (property-based, fast-check): setup values, setup files and image files,
 * mutated at random (tests/hostile/fuzzProperties.ts). A short run here — RHOFIELD_FUZZ_RUNS runs per
 * property, default 500 — keeps `pnpm test` fast; the long run (10,000 cases and more) is the bench
 * case `pnpm bench fuzz`.
 */
import { describe, expect, it } from 'vitest';
import { fuzzCommandLine, fuzzImages, fuzzSetupFiles, fuzzSetupValues, type FuzzReport } from './fuzzProperties.js';

const RUNS = Number(process.env['RHOFIELD_FUZZ_RUNS'] ?? 500);

function clean(r: FuzzReport): void {
  expect(r.accepted + r.refused + r.crashes).toBe(r.runs);
  expect(r.crashes, r.firstCrash).toBe(0);
}

describe('bad input never crashes', () => {
  it(`setup values: ${RUNS} random and mutated setups`, () => {
    const r = fuzzSetupValues(RUNS);
    clean(r);
    // both outcomes occur, so the property is not vacuous
    expect(r.refused).toBeGreaterThan(RUNS / 4);
    expect(r.accepted).toBeGreaterThan(0);
  });
  it(`setup files: ${RUNS} edited texts`, () => {
    const r = fuzzSetupFiles(RUNS);
    clean(r);
    expect(r.refused).toBeGreaterThan(RUNS / 4);
  });
  it(`image files: ${RUNS} mutated PNG/TIFF files`, async () => {
    const r = await fuzzImages(RUNS);
    clean(r);
    expect(r.refused).toBeGreaterThan(RUNS / 4);
    expect(r.accepted).toBeGreaterThan(0);
  });
  it(`command line: ${Math.ceil(RUNS / 5)} runs of plan and check on mutated files, never exit 1`, async () => {
    const r = await fuzzCommandLine(Math.ceil(RUNS / 5));
    clean(r);
    expect(r.refused).toBeGreaterThan(0);
  });
});
