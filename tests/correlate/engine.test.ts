/**
 * Displacement engines: concurrent measurements never share memory (each result equals the same pair
 * measured alone, bit for bit), calls on one engine queue, a process exits by itself after using
 * worker threads, and thread counts above the machine's cores are capped with a warning.
 */
import { spawnSync } from 'node:child_process';
import os from 'node:os';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { availableCores, closeWorkers, createDisplacementEngine, measureDisplacement, synthPair, type DisplacementResult, type Field, type MaskField, type MeasureDisplacementOptions } from '@rhofield/core';

afterAll(() => closeWorkers());

const ROOT = fileURLToPath(new URL('../..', import.meta.url));

/** Four different pairs of one size: different dots (seeds) and different displacement fields. */
function pairs(): { ref: Field; meas: Field }[] {
  const o = { width: 192, height: 160, diameterPx: 2.8 } as const;
  return [
    synthPair({ ...o, seed: 31, displacement: { kind: 'uniform', dx: 1.37, dy: -0.61 } }),
    synthPair({ ...o, seed: 32, displacement: { kind: 'uniform', dx: -2.4, dy: 0.9 } }),
    synthPair({ ...o, seed: 33, displacement: { kind: 'sine', amplitudePx: 1.5, wavelengthPx: 96, along: 'x', component: 'dy' } }),
    synthPair({ ...o, seed: 34, displacement: { kind: 'sine', amplitudePx: 2, wavelengthPx: 128, along: 'y', component: 'dx' } }),
  ];
}

function bytes(a: Float32Array | Uint8Array): Buffer {
  return Buffer.from(a.buffer, a.byteOffset, a.byteLength);
}

/** dx, dy, status and peak ratio of two results are the same bytes. */
function expectSameBits(a: DisplacementResult, b: DisplacementResult): void {
  expect(bytes(a.dxPx.data).equals(bytes(b.dxPx.data))).toBe(true);
  expect(bytes(a.dyPx.data).equals(bytes(b.dyPx.data))).toBe(true);
  expect(bytes(a.status).equals(bytes(b.status))).toBe(true);
  expect(bytes(a.peakRatio.data).equals(bytes(b.peakRatio.data))).toBe(true);
  expect(bytes(a.correlation.data).equals(bytes(b.correlation.data))).toBe(true);
}

describe('concurrent measurements', () => {
  const ps = pairs();

  for (const threads of [1, 2])
    it(`four different pairs measured with Promise.all (threads ${threads}) equal the same pairs measured one by one, bit for bit`, async () => {
      const alone: DisplacementResult[] = [];
      for (const p of ps) alone.push(await measureDisplacement(p.ref, p.meas, { threads }));
      // the pairs really differ (otherwise the comparison could not catch a swapped field)
      for (let i = 1; i < ps.length; i++) expect(bytes(alone[i]!.dxPx.data).equals(bytes(alone[0]!.dxPx.data))).toBe(false);
      const together = await Promise.all(ps.map((p) => measureDisplacement(p.ref, p.meas, { threads })));
      for (let i = 0; i < ps.length; i++) expectSameBits(together[i]!, alone[i]!);
      // and on engines the caller owns: four engines side by side, and four calls queued on one engine
      const engines = ps.map(() => createDisplacementEngine({ threads }));
      try {
        const own = await Promise.all(ps.map((p, i) => engines[i]!.measure(p.ref, p.meas)));
        for (let i = 0; i < ps.length; i++) expectSameBits(own[i]!, alone[i]!);
        const queued = await Promise.all(ps.map((p) => measureDisplacement(p.ref, p.meas, { engine: engines[0]! })));
        for (let i = 0; i < ps.length; i++) expectSameBits(queued[i]!, alone[i]!);
      } finally {
        await Promise.all(engines.map((e) => e.dispose()));
      }
    });

  it('the same holds with a mask, the B-spline interpolator and whole-plane refinement (threads 2, different options per pair)', async () => {
    const mask: MaskField = { width: 192, height: 160, data: new Uint8Array(192 * 160).fill(1) };
    for (let y = 60; y < 100; y++) for (let x = 70; x < 120; x++) mask.data[x + y * 192] = 0;
    const opts: MeasureDisplacementOptions[] = [
      { threads: 2, mask },
      { threads: 2, interpolation: 'bspline3' },
      { threads: 2, refine: 'fft', windowPx: 16 },
      { threads: 1, mask, interpolation: 'bspline3', passes: 2 },
    ];
    const alone: DisplacementResult[] = [];
    for (let i = 0; i < ps.length; i++) alone.push(await measureDisplacement(ps[i]!.ref, ps[i]!.meas, opts[i]!));
    const together = await Promise.all(ps.map((p, i) => measureDisplacement(p.ref, p.meas, opts[i]!)));
    for (let i = 0; i < ps.length; i++) expectSameBits(together[i]!, alone[i]!);
    expect(alone[0]!.counts.masked).toBeGreaterThan(0);
  });

  it('a disposed engine refuses further calls; a failing call does not block the queue', async () => {
    const p = ps[0]!;
    const e = createDisplacementEngine({ threads: 1 });
    const bad = e.measure(p.ref, p.meas, { windowPx: 24 });
    const good = e.measure(p.ref, p.meas);
    await expect(bad).rejects.toThrow(/windowPx/);
    expect((await good).counts.valid).toBeGreaterThan(0);
    await e.dispose();
    await expect(e.measure(p.ref, p.meas)).rejects.toThrow(/disposed/);
    expect(() => createDisplacementEngine({ threads: 0 })).toThrow(/threads/);
  });
});

describe('threads', () => {
  it('more threads than cores are capped at the cores, with a warning in the result', async () => {
    const cores = availableCores();
    expect(cores).toBe(Math.max(1, os.availableParallelism()));
    const p = pairs()[1]!;
    const r = await measureDisplacement(p.ref, p.meas, { threads: cores + 3 });
    expect(r.threads).toBe(cores);
    expect(r.settings.threads).toBe(cores);
    expect(r.warnings).toEqual([`threads ${cores + 3} exceeds the ${cores} core${cores === 1 ? '' : 's'}; using ${cores}`]);
    const ok = await measureDisplacement(p.ref, p.meas, { threads: 1 });
    expect(ok.warnings).toEqual([]);
    expectSameBits(r, await measureDisplacement(p.ref, p.meas, { threads: cores }));
  });

  it('a process exits by itself after measuring with worker threads (no close call)', () => {
    const script = `
      import { measureDisplacement, createDisplacementEngine, synthPair } from '@rhofield/core';
      const { ref, meas } = synthPair({ width: 128, height: 128, diameterPx: 2.8, seed: 3, displacement: { kind: 'uniform', dx: 1, dy: 0.5 } });
      const a = await measureDisplacement(ref, meas, { threads: 2 });
      const b = await createDisplacementEngine({ threads: 2 }).measure(ref, meas);
      console.log(JSON.stringify({ threads: [a.threads, b.threads], valid: a.counts.valid }));`;
    const r = spawnSync(process.execPath, ['--conditions=rhofield-source', '--import', 'tsx', '--input-type=module', '-e', script], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });
    expect(r.error).toBeUndefined(); // a process kept alive by its workers shows here as a timeout
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout.trim().split('\n').pop()!) as { threads: number[]; valid: number };
    const t = Math.min(2, availableCores());
    expect(out.threads).toEqual([t, t]);
    expect(out.valid).toBeGreaterThan(0);
  }, 70_000);
});
