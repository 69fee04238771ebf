/**
 * The WebAssembly SIMD kernels (packages/core/src/correlate/kernels.wat) against the plain TypeScript
 * kernels they replace, which the rest of the suite checks against analytic results: the committed
 * binary is the text built, the deformation stage agrees with sampleLanczos4 / sampleKeys evaluated
 * pixel by pixel (including positions whose kernel leaves the image), and the lag-limited correlator
 * gives the same displacement, correlation and peak ratio from either kernel.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { buildKernels, wasmPath } from '../../scripts/build-wasm.mjs';
import { simdKernels } from '../../packages/core/src/correlate/simdKernels.js';
import { chunkCount, runChunk, type EngineImages, type DeformTask } from '../../packages/core/src/correlate/engine.js';
import { sampleLanczos4 } from '../../packages/core/src/correlate/lanczos.js';
import { sampleKeys } from '../../packages/core/src/correlate/keysCubic.js';
import { axisTaps, type GridAxis } from '../../packages/core/src/correlate/predictor.js';
import { DirectWindowCorrelator } from '../../packages/core/src/correlate/directCorrelator.js';
import { createRng } from '../../packages/core/src/util/rng.js';
import { synthPair } from '@rhofield/core';

describe('WebAssembly SIMD kernels', () => {
  it('kernels.wasm is kernels.wat built (pnpm build:wasm)', async () => {
    const built = await buildKernels();
    expect(Buffer.compare(built, readFileSync(wasmPath))).toBe(0);
  });

  it('are available on this Node (WebAssembly SIMD)', () => {
    expect(simdKernels()).not.toBeNull();
  });

  for (const interpolation of ['lanczos4', 'keys'] as const)
    it(`deformation (${interpolation}) equals the TypeScript sampler pixel by pixel, borders included`, () => {
      const width = 77;
      const height = 61;
      const rng = createRng(5);
      const ref = Float32Array.from({ length: width * height }, () => 255 * rng.next());
      const meas = Float32Array.from({ length: width * height }, () => 255 * rng.next());
      // a smooth predictor on a 16 px grid, up to ±4 px, so that many kernels reach beyond the image
      const ay: GridAxis = { origin: 8, step: 16, count: 4 };
      const rows = ay.count;
      const predX = new Float32Array(rows * width);
      const predY = new Float32Array(rows * width);
      for (let r = 0; r < rows; r++)
        for (let x = 0; x < width; x++) {
          predX[r * width + x] = 4 * Math.sin(x / 9 + r);
          predY[r * width + x] = 3.5 * Math.cos(x / 13 - 0.7 * r);
        }
      const img = {
        width,
        height,
        ref,
        meas,
        defRef: new Float32Array(width * height),
        defMeas: new Float32Array(width * height),
        mask: null,
      } as unknown as EngineImages;
      const task: DeformTask = { op: 'deform', interpolation, predX, predY, ay };
      for (let k = 0; k < chunkCount(img, task); k++) runChunk(img, task, k);
      const sample = interpolation === 'lanczos4' ? sampleLanczos4 : sampleKeys;
      const idx = new Int32Array(4);
      const w = new Float64Array(4);
      const tmp = new Float64Array(4);
      let worst = 0;
      let nan = 0;
      for (let y = 0; y < height; y++) {
        axisTaps(ay, y, idx, w, 0, tmp);
        for (let x = 0; x < width; x++) {
          let hx = 0;
          let hy = 0;
          for (let j = 0; j < 4; j++) {
            hx += 0.5 * w[j]! * predX[idx[j]! * width + x]!;
            hy += 0.5 * w[j]! * predY[idx[j]! * width + x]!;
          }
          const a = sample(ref, width, height, x - hx, y - hy);
          const b = sample(meas, width, height, x + hx, y + hy);
          const q = x + y * width;
          if (!(a === a) || !(b === b)) {
            expect(img.defRef[q]).toBeNaN();
            expect(img.defMeas[q]).toBeNaN();
            nan++;
            continue;
          }
          worst = Math.max(worst, Math.abs(img.defRef[q]! - a), Math.abs(img.defMeas[q]! - b));
        }
      }
      expect(nan).toBeGreaterThan(100); // the border rules were exercised
      expect(worst).toBeLessThan(2e-3); // single precision of 0–255 values (≈ 1e-5 relative)
    });

  // (0.31, −0.27): peak at lag 0; (0.93, −1.12): beyond ½ px, the lags are computed again around (1, −1)
  for (const [dx, dy] of [
    [0.31, -0.27],
    [0.93, -1.12],
  ] as const)
    it(`lag-limited correlation, shift (${dx}, ${dy}) px: SIMD strip and TypeScript window give the same vectors`, () => {
      const n = 32;
      const width = 256;
      const { ref, meas } = synthPair({ width, height: 64, diameterPx: 2.8, seed: 9, displacement: { kind: 'uniform', dx, dy } });
      // a few missing pixels in one window exercise the NaN handling
      for (let k = 0; k < 40; k++) ref.data[3 + 5 * width + 130 + k * (width + 1)] = NaN;
      const K = simdKernels()!;
      const cor = new DirectWindowCorrelator(n);
      const y0 = 16;
      const out = () => ({ dx: new Float32Array(8), dy: new Float32Array(8), correlation: new Float32Array(8), peakRatio: new Float32Array(8) });
      const js = out();
      const simd = out();
      const strip = K.scratch(8 * n * width);
      K.f32.set(ref.data.subarray(y0 * width, (y0 + n) * width), strip / 4);
      K.f32.set(meas.data.subarray(y0 * width, (y0 + n) * width), strip / 4 + n * width);
      const done: boolean[] = [];
      for (let c = 0; c < 7; c++) {
        const x0 = 8 + 32 * c;
        const a = cor.run(ref.data, meas.data, width, 64, x0, y0, 600, js, c);
        const b = cor.runStrip(strip, strip + 4 * n * width, width, x0, 600, simd, c);
        expect(b).toBe(a);
        done.push(a);
      }
      expect(done.every(Boolean)).toBe(true);
      for (let c = 0; c < 7; c++) {
        expect(Math.abs(simd.dx[c]! - js.dx[c]!)).toBeLessThan(1e-4);
        expect(Math.abs(simd.dy[c]! - js.dy[c]!)).toBeLessThan(1e-4);
        expect(Math.abs(simd.correlation[c]! - js.correlation[c]!)).toBeLessThan(1e-5);
        expect(Math.abs(simd.peakRatio[c]! / js.peakRatio[c]! - 1)).toBeLessThan(1e-4);
        expect(Math.abs(js.dx[c]! - dx)).toBeLessThan(0.08); // and both measure the shift
        expect(Math.abs(js.dy[c]! - dy)).toBeLessThan(0.08);
      }
    });
});

describe('TypeScript fallback (RHOFIELD_KERNELS=js)', () => {
  it('measures the same field as the SIMD kernels (separate processes, 256² uniform shift)', () => {
    // ground truth: the shift given to the project's dot renderer (synthPair); the two engines must
    // agree to single precision, and both must find it
    const script = `
      import { measureDisplacement, synthPair, closeWorkers } from '@rhofield/core';
      const { ref, meas } = synthPair({ width: 256, height: 256, diameterPx: 2.8, seed: 4, displacement: { kind: 'uniform', dx: 1.21, dy: -0.77 } });
      const r = await measureDisplacement(ref, meas, { threads: 1 });
      console.log(JSON.stringify({ dx: Array.from(r.dxPx.data), dy: Array.from(r.dyPx.data) }));
      await closeWorkers();`;
    const run = (kernels: string): { dx: number[]; dy: number[] } => {
      const r = spawnSync(process.execPath, ['--conditions=rhofield-source', '--import', 'tsx', '--input-type=module', '-e', script], {
        env: { ...process.env, RHOFIELD_KERNELS: kernels },
        encoding: 'utf8',
        cwd: fileURLToPath(new URL('../..', import.meta.url)),
      });
      expect(r.status, r.stderr).toBe(0);
      return JSON.parse(r.stdout.trim().split('\n').pop()!);
    };
    const simd = run('wasm');
    const js = run('js');
    expect(js.dx.length).toBe(simd.dx.length);
    let worst = 0;
    for (let k = 0; k < js.dx.length; k++) {
      worst = Math.max(worst, Math.abs(js.dx[k]! - simd.dx[k]!), Math.abs(js.dy[k]! - simd.dy[k]!));
      expect(Math.abs(js.dx[k]! - 1.21)).toBeLessThan(0.05);
      expect(Math.abs(js.dy[k]! + 0.77)).toBeLessThan(0.05);
    }
    expect(worst).toBeLessThan(1e-3);
  }, 60_000);
});
