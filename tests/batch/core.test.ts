import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  addSample,
  canonicalJson,
  combineStatistics,
  createRunningStatistics,
  decodeNpy,
  encodeNpy,
  finalizeStatistics,
  formatNumbered,
  frameId,
  matchFrameNames,
  naturalCompare,
  pairFrames,
  parseFrameRange,
  parseShard,
  selectShard,
  settingsHash,
  shardFromEnv,
  type FrameRef,
} from '@rhofield/core';

describe('frame sequences', () => {
  it('formatNumbered(pattern, n) pads like printf (%05d, %d, %3d)', () => {
    expect(formatNumbered('frame_%05d.tif', 12)).toBe('frame_00012.tif');
    expect(formatNumbered('f%d.png', 7)).toBe('f7.png');
    expect(formatNumbered('f%3d.png', 7)).toBe('f  7.png');
  });
  it('parseFrameRange accepts FIRST:LAST[:STEP] and rejects LAST < FIRST with the --range name', () => {
    expect(parseFrameRange('3:9:2')).toEqual({ first: 3, last: 9, step: 2 });
    expect(parseFrameRange('5')).toEqual({ first: 5, last: 5, step: 1 });
    expect(() => parseFrameRange('9:3')).toThrow(/for --range but received "9:3"/);
    expect(() => parseFrameRange('a-b')).toThrow(/FIRST:LAST/);
  });
  it('matchFrameNames orders numbered frames by number and applies the range', () => {
    const names = ['frame_00010.tif', 'frame_00002.tif', 'frame_00001.tif', 'other.tif', 'frame_0003.tif'];
    const m = matchFrameNames('frame_%05d.tif', names, parseFrameRange('1:10:1'));
    expect(m.map((f) => f.number)).toEqual([1, 2, 10]);
    expect(matchFrameNames('frame_%05d.tif', names, parseFrameRange('2:10:8')).map((f) => f.name)).toEqual(['frame_00002.tif', 'frame_00010.tif']);
  });
  it('matchFrameNames with wildcards sorts naturally and numbers by position', () => {
    const m = matchFrameNames('shot?_*.png', ['shot1_b10.png', 'shot1_b2.png', 'shot12_a.png', 'x.png']);
    expect(m).toEqual([
      { name: 'shot1_b2.png', number: 0 },
      { name: 'shot1_b10.png', number: 1 },
    ]);
    expect(naturalCompare('a2', 'a10')).toBeLessThan(0);
  });
  it('frameId is file-system safe and marks stack pages', () => {
    expect(frameId('/data/run 1/frame_00012.tif')).toBe('frame_00012');
    expect(frameId('stack.tif', 3)).toBe('stack_p00003');
    expect(frameId('../.hidden.png')).toBe('_hidden');
  });
});

describe('pairFrames(mode, frames, references)', () => {
  const frames: FrameRef[] = [0, 1, 2, 3].map((n) => ({ path: `f_${n}.png`, number: n }));
  it('single: one reference for every frame', () => {
    const jobs = pairFrames('single', frames, [{ path: 'ref.png', number: 0 }]);
    expect(jobs.map((j) => [j.id, j.refPath, j.measPath])).toEqual(frames.map((f) => [`f_${f.number}`, 'ref.png', f.path]));
  });
  it('per-frame: matched by frame number, else by position, else an error', () => {
    const refs = [3, 2, 1, 0].map((n) => ({ path: `r_${n}.png`, number: n }));
    expect(pairFrames('per-frame', frames, refs).map((j) => j.refPath)).toEqual(['r_0.png', 'r_1.png', 'r_2.png', 'r_3.png']);
    const byPos = [10, 11, 12, 13].map((n) => ({ path: `r_${n}.png`, number: n }));
    expect(pairFrames('per-frame', frames, byPos).map((j) => j.refPath)).toEqual(['r_10.png', 'r_11.png', 'r_12.png', 'r_13.png']);
    expect(() => pairFrames('per-frame', frames, byPos.slice(1))).toThrow(/4 frames but 3 references/);
  });
  it('consecutive: frame i is the reference of frame i+1; stack pages keep their page numbers', () => {
    const pages: FrameRef[] = [0, 1, 2].map((p) => ({ path: 'stack.tif', page: p, number: p }));
    const jobs = pairFrames('consecutive', pages);
    expect(jobs.map((j) => [j.id, j.refPage, j.measPage])).toEqual([
      ['stack_p00001', 0, 1],
      ['stack_p00002', 1, 2],
    ]);
    expect(() => pairFrames('consecutive', pages.slice(0, 1))).toThrow(/at least 2 frames/);
  });
  it('refuses two frames with the same result id', () => {
    expect(() => pairFrames('single', [{ path: 'a/x.png', number: 0 }, { path: 'b/x.tif', number: 1 }], [{ path: 'r.png', number: 0 }])).toThrow(
      /same result folder "x"/,
    );
  });
});

describe('shards', () => {
  it('parseShard rejects 3/2, 0/4 and junk, naming --shard', () => {
    expect(parseShard('2/4')).toEqual({ index: 2, count: 4 });
    expect(() => parseShard('3/2')).toThrow(/for --shard but received "3\/2"/);
    expect(() => parseShard('0/4')).toThrow(/--shard/);
    expect(() => parseShard('1-4')).toThrow(/K\/N/);
  });
  it('shardFromEnv uses TASK_ID − TASK_MIN + 1 and TASK_COUNT (arrays need not start at 1)', () => {
    expect(shardFromEnv({})).toBeUndefined();
    expect(shardFromEnv({ SLURM_ARRAY_TASK_ID: '7', SLURM_ARRAY_TASK_MIN: '5', SLURM_ARRAY_TASK_COUNT: '4' })).toEqual({ index: 3, count: 4 });
    expect(shardFromEnv({ SLURM_ARRAY_TASK_ID: '0', SLURM_ARRAY_TASK_MIN: '0', SLURM_ARRAY_TASK_COUNT: '2' })).toEqual({ index: 1, count: 2 });
  });
  it('selectShard: the N shards partition the list in order, sizes differ by at most 1 (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 300 }), fc.integer({ min: 1, max: 20 }), (total, n) => {
        const items = Array.from({ length: total }, (_, i) => i);
        const parts = Array.from({ length: n }, (_, k) => selectShard(items, { index: k + 1, count: n }));
        expect(parts.flat()).toEqual(items);
        const sizes = parts.map((p) => p.length);
        expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
      }),
    );
  });
});

describe('running statistics (Welford 1962; Chan, Golub & LeVeque 1979)', () => {
  // independent check: textbook two-pass mean and sample variance over the finite samples
  function twoPass(samples: number[][], i: number): { n: number; mean: number; std: number } {
    const v = samples.map((s) => s[i]!).filter(Number.isFinite);
    const mean = v.reduce((a, b) => a + b, 0) / v.length;
    const ss = v.reduce((a, b) => a + (b - mean) ** 2, 0);
    return { n: v.length, mean: v.length ? mean : NaN, std: v.length > 1 ? Math.sqrt(ss / (v.length - 1)) : NaN };
  }
  it('matches two-pass mean/std per point, skipping NaN; any split into consecutive blocks combines to the same (rel 1e-12)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.array(fc.oneof(fc.double({ min: -1e3, max: 1e3, noNaN: true }), fc.constant(NaN)), { minLength: 3, maxLength: 3 }), {
          minLength: 1,
          maxLength: 30,
        }),
        fc.integer({ min: 0, max: 30 }),
        (samples, cut) => {
          const whole = createRunningStatistics(3);
          for (const s of samples) addSample(whole, s);
          const k = Math.min(cut, samples.length);
          const a = createRunningStatistics(3);
          const b = createRunningStatistics(3);
          samples.slice(0, k).forEach((s) => addSample(a, s));
          samples.slice(k).forEach((s) => addSample(b, s));
          const fw = finalizeStatistics(whole);
          const fm = finalizeStatistics(combineStatistics(a, b));
          for (let i = 0; i < 3; i++) {
            const ref = twoPass(samples, i);
            expect(fw.count[i]).toBe(ref.n);
            expect(fm.count[i]).toBe(ref.n);
            for (const [got, want] of [
              [fw.mean[i]!, ref.mean],
              [fw.std[i]!, ref.std],
              [fm.mean[i]!, ref.mean],
              [fm.std[i]!, ref.std],
            ] as const) {
              if (Number.isNaN(want)) expect(got).toBeNaN();
              else expect(Math.abs(got - want)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(want)) + 1e-9);
            }
          }
        },
      ),
    );
  });
});

describe('settingsHash / canonicalJson', () => {
  it('ignores key order and undefined members, changes with any value', () => {
    expect(canonicalJson({ b: 1, a: { d: [1, 2], c: undefined } })).toBe('{"a":{"d":[1,2]},"b":1}');
    expect(settingsHash({ a: 1, b: 2 })).toBe(settingsHash({ b: 2, a: 1 }));
    expect(settingsHash({ a: 1, b: 2 })).not.toBe(settingsHash({ a: 1, b: 3 }));
  });
});

describe('encodeNpy / decodeNpy', () => {
  it('round-trips f8/f4/u4 and the header is 64-byte aligned', () => {
    const f8 = new Float64Array([1.5, NaN, -2, 1e-300, 3, 4]);
    const bytes = encodeNpy(f8, [2, 3]);
    expect((bytes[8]! + 256 * bytes[9]! + 10) % 64).toBe(0);
    const back = decodeNpy(bytes);
    expect(back.shape).toEqual([2, 3]);
    expect(Array.from(back.data)).toEqual(Array.from(f8));
    expect(Array.from(decodeNpy(encodeNpy(new Uint32Array([7, 8]), [2])).data)).toEqual([7, 8]);
    expect(() => decodeNpy(new Uint8Array(20), 'x.npy')).toThrow(/x.npy is not a .npy file/);
  });
  const py = '/usr/bin/python3';
  const hasNumpy = existsSync(py) && spawnSync(py, ['-c', 'import numpy']).status === 0;
  if (!hasNumpy) console.warn('tests/batch/core.test.ts: numpy cross-check SKIPPED - python3 with numpy is not installed (CI installs python3-numpy)');
  it.skipIf(!hasNumpy)('is read by numpy (independent reader) with dtype and shape intact', () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), 'npy-'));
    const f = path.join(dir, 'a.npy');
    writeFileSync(f, encodeNpy(new Float64Array([0.25, -1, 2, 3, 4, 5]), [1, 3, 2]));
    const out = execFileSync(py, ['-c', `import numpy as n;a=n.load(${JSON.stringify(f)});print(a.dtype,a.shape,a[0,2,1])`]).toString().trim();
    expect(out).toBe('float64 (1, 3, 2) 5.0');
  });
});
