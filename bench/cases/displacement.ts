/**
 * Displacement engine: accuracy against known synthetic fields and throughput.
 *
 * Accuracy (ground truth = the displacement given to the project's own dot renderer):
 *  - uniform shifts 0 … 7.93 px along a diagonal (dx = v, dy = −0.6 v), 2.8 px dots, 10 dots per
 *    32×32 window, 512×512, final 32 px windows: default multi-pass (targets RMS ≤ 0.02 px and
 *    |bias| ≤ 0.005 px per value), single pass (RMS ≤ 0.06 px), and noise σ = 1 % of the dot peak
 *    (RMS ≤ 0.04 px). RMS over all vectors and both components; bias = mean error per component
 *    (the larger of the two); outliers = error > 0.5 px.
 *  - sinusoidal fields, amplitude 2 px, wavelength 64 px, along x and along y (both components), two
 *    phases relative to the grid: amplitude from a least-squares sine fit at the known wavelength over
 *    the interior (target 0.85–1.05 of the truth), judged on the default settings (3 passes, median
 *    test keeping flagged vectors of peak ratio ≥ 3 or normalized correlation ≥ 0.7); shown beside:
 *    4 passes, and the published test (every flagged vector replaced).
 * Every pass/fail is judged on what the defaults do (single pass: the defaults with passes 1).
 * Throughput: 1024² and 2048², 32 px windows, 50 % overlap, 1 and 2 threads, single pass and default
 * multi-pass: final-grid vectors per second (median of 3 runs after a warm-up; image synthesis
 * excluded), share of time per stage and peak RSS. The machine is shared with other people's work,
 * so expect ±30 % on timings.
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import FFT from 'fft.js';
import { closeWorkers, describeSchedule, measureDisplacement, synthPair, type DisplacementResult, type MeasureDisplacementOptions } from '@rhofield/core';

export const name = 'displacement';

const SHIFTS = [0, 0.13, 0.37, 0.61, 0.89, 1.13, 1.37, 1.87, 2.41, 3.17, 4.13, 5.29, 6.71, 7.93];

function errors(r: DisplacementResult, tx: (x: number, y: number) => [number, number]): { rms: number; biasX: number; biasY: number; outliers: number } {
  const { cols, rows, xPx, yPx } = r.grid;
  let s2 = 0;
  let bx = 0;
  let by = 0;
  let n = 0;
  let out = 0;
  for (let j = 0; j < rows; j++)
    for (let i = 0; i < cols; i++) {
      const k = i + j * cols;
      const [ux, uy] = tx(xPx[i]!, yPx[j]!);
      const ex = r.dxPx.data[k]! - ux;
      const ey = r.dyPx.data[k]! - uy;
      if (!Number.isFinite(ex) || !Number.isFinite(ey)) {
        out++;
        n++;
        continue;
      }
      s2 += ex * ex + ey * ey;
      bx += ex;
      by += ey;
      if (Math.hypot(ex, ey) > 0.5) out++;
      n++;
    }
  return { rms: Math.sqrt(s2 / (2 * n)), biasX: bx / n, biasY: by / n, outliers: out / n };
}

async function uniformCase(label: string, opts: MeasureDisplacementOptions, noiseFraction: number, rmsTarget: number, biasTarget: number | null): Promise<Record<string, unknown>> {
  const rows: Record<string, unknown>[] = [];
  let pass = true;
  for (const v of SHIFTS) {
    const dx = v;
    const dy = -0.6 * v;
    const peak = 0.6 * 65535;
    const { ref, meas } = synthPair({
      width: 512,
      height: 512,
      diameterPx: 2.8,
      dotsPerWindow: 10,
      seed: 11 + Math.round(v * 100),
      bitDepth: 16,
      peak,
      noiseSigma: noiseFraction * peak,
      displacement: { kind: 'uniform', dx, dy },
    });
    const r = await measureDisplacement(ref, meas, opts);
    const e = errors(r, () => [dx, dy]);
    const bias = Math.max(Math.abs(e.biasX), Math.abs(e.biasY));
    const ok = e.rms <= rmsTarget && (biasTarget === null || bias <= biasTarget);
    pass &&= ok;
    rows.push({ dx, dy: +dy.toFixed(3), rms: +e.rms.toFixed(4), bias: +bias.toFixed(4), outliers: +e.outliers.toFixed(4), ok });
  }
  process.stderr.write(`\n${label}  (target RMS ≤ ${rmsTarget}${biasTarget !== null ? `, |bias| ≤ ${biasTarget}` : ''})\n`);
  process.stderr.write('   dx      dy      RMS     |bias|  outliers  ok\n');
  for (const r of rows)
    process.stderr.write(
      `${String(r.dx).padStart(6)} ${String(r.dy).padStart(7)}  ${String(r.rms).padEnd(7)} ${String(r.bias).padEnd(7)} ${String(r.outliers).padEnd(8)}  ${r.ok ? 'yes' : 'NO'}\n`,
    );
  return { rows, pass };
}

/** Least-squares fit u ≈ a·sin(kx) + b·cos(kx) + c over interior vectors; returns √(a² + b²). */
function sineAmplitude(r: DisplacementResult, along: 'x' | 'y', comp: 'dx' | 'dy', wavelength: number, marginPx: number): number {
  const k = (2 * Math.PI) / wavelength;
  const { cols, rows, xPx, yPx } = r.grid;
  const M = new Float64Array(9);
  const v = new Float64Array(3);
  for (let j = 0; j < rows; j++)
    for (let i = 0; i < cols; i++) {
      const x = xPx[i]!;
      const y = yPx[j]!;
      if (x < marginPx || y < marginPx || x > r.grid.imageWidth - 1 - marginPx || y > r.grid.imageHeight - 1 - marginPx) continue;
      const u = (comp === 'dx' ? r.dxPx : r.dyPx).data[i + j * cols]!;
      if (!Number.isFinite(u)) continue;
      const t = k * (along === 'x' ? x : y);
      const b = [Math.sin(t), Math.cos(t), 1];
      for (let p = 0; p < 3; p++) {
        v[p]! += b[p]! * u;
        for (let q = 0; q < 3; q++) M[3 * p + q]! += b[p]! * b[q]!;
      }
    }
  // solve the 3×3 normal equations (Cramer's rule)
  const det = (m: ArrayLike<number>): number =>
    m[0]! * (m[4]! * m[8]! - m[5]! * m[7]!) - m[1]! * (m[3]! * m[8]! - m[5]! * m[6]!) + m[2]! * (m[3]! * m[7]! - m[4]! * m[6]!);
  const D = det(M);
  const col = (c: number): number => {
    const m = Array.from(M);
    for (let p = 0; p < 3; p++) m[3 * p + c] = v[p]!;
    return det(m) / D;
  };
  return Math.hypot(col(0), col(1));
}

async function sineCases(): Promise<Record<string, unknown>> {
  const out: Record<string, unknown>[] = [];
  let pass = true;
  const A = 2;
  const L = 64;
  // judged: the defaults (what `rhofield displacement` uses; step 16 = default for 32 px windows);
  // shown for comparison: one more deformation pass, and the median test as published
  const variants: [string, MeasureDisplacementOptions, boolean][] = [
    ['defaults', { windowPx: 32, stepPx: 16 }, true],
    ['passes 4', { windowPx: 32, stepPx: 16, passes: 4 }, false],
    ['published median test', { windowPx: 32, stepPx: 16, medianKeepPeakRatio: Infinity, medianKeepCorrelation: Infinity }, false],
  ];
  for (const [along, comp] of [
    ['x', 'dx'],
    ['y', 'dy'],
    ['x', 'dy'],
    ['y', 'dx'],
  ] as const)
    // shift 0: the 16 px grid (centres 15.5 + 16k) samples the sine near its crests and zeros;
    // shift 8 px: it samples ±45° from the crests
    for (const shiftPx of [0, 8]) {
      const f = (x: number, y: number): [number, number] => {
        const v = A * Math.sin((2 * Math.PI * ((along === 'x' ? x : y) - shiftPx)) / L);
        return comp === 'dx' ? [v, 0] : [0, v];
      };
      const { ref, meas } = synthPair({ width: 512, height: 512, diameterPx: 2.8, dotsPerWindow: 10, seed: 7, bitDepth: 16, displacement: f });
      for (const [label, opts, judged] of variants) {
        const r = await measureDisplacement(ref, meas, opts);
        const ratio = sineAmplitude(r, along, comp, L, 32) / A;
        const ok = ratio >= 0.85 && ratio <= 1.05;
        if (judged) pass &&= ok;
        out.push({ along, component: comp, shiftPx, variant: label, options: { ...opts, medianKeepPeakRatio: opts.medianKeepPeakRatio === Infinity ? 'Infinity' : opts.medianKeepPeakRatio, medianKeepCorrelation: opts.medianKeepCorrelation === Infinity ? 'Infinity' : opts.medianKeepCorrelation }, passes: r.passes.length, judged, amplitudeRatio: +ratio.toFixed(4), ok, replaced: r.counts.replaced });
      }
    }
  process.stderr.write(
    `\nsine, amplitude ${A} px, wavelength ${L} px, 32 px windows every 16 px, median test on (target ratio 0.85–1.05, judged on the defaults)\n` +
      describeSchedule({ windowPx: 32, stepPx: 16 }).replace(/^/gm, '    ') +
      '\n',
  );
  for (const r of out)
    process.stderr.write(
      `  along ${r.along} ${r.component}  grid phase shift ${String(r.shiftPx).padStart(2)} px  ${String(r.variant).padEnd(22)}: ratio ${String(r.amplitudeRatio).padEnd(6)}  replaced ${String(r.replaced).padStart(4)}  ${r.judged ? (r.ok ? 'ok' : 'NO') : r.ok ? '(ok)' : '(no)'}\n`,
    );
  return { rows: out, pass, judgedOn: 'defaults (windowPx 32, stepPx 16, passes 3, refine direct, medianKeepPeakRatio 3, medianKeepCorrelation 0.7)' };
}

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}

/**
 * Machine-speed reference: plain fft.js row-column 32×32 cross-correlations per second on one core
 * (forward transforms of two real windows, conjugate product, inverse), median of 3 one-second runs.
 * Engine throughput can be read against it when machines or loads differ between runs.
 */
function fftJsBaseline(): number {
  const N = 32;
  const f = new FFT(N);
  const a = Float64Array.from({ length: N * N }, (_, i) => Math.sin(i * 0.7));
  const b = Float64Array.from({ length: N * N }, (_, i) => Math.cos(i * 0.3));
  const rowsA = Array.from({ length: N }, () => f.createComplexArray() as number[]);
  const rowsB = Array.from({ length: N }, () => f.createComplexArray() as number[]);
  const col = f.createComplexArray() as number[];
  const colOut = f.createComplexArray() as number[];
  const tmp = new Array<number>(N).fill(0);
  const columns = (R: number[][], inverse: boolean): void => {
    for (let x = 0; x < N; x++) {
      for (let y = 0; y < N; y++) {
        col[2 * y] = R[y]![2 * x]!;
        col[2 * y + 1] = R[y]![2 * x + 1]!;
      }
      if (inverse) f.inverseTransform(colOut, col);
      else f.transform(colOut, col);
      for (let y = 0; y < N; y++) {
        R[y]![2 * x] = colOut[2 * y]!;
        R[y]![2 * x + 1] = colOut[2 * y + 1]!;
      }
    }
  };
  const fwd = (src: Float64Array, R: number[][]): void => {
    for (let y = 0; y < N; y++) {
      for (let x = 0; x < N; x++) tmp[x] = src[x + y * N]!;
      f.realTransform(R[y]!, tmp);
      f.completeSpectrum(R[y]!);
    }
    columns(R, false);
  };
  const once = (): void => {
    fwd(a, rowsA);
    fwd(b, rowsB);
    for (let y = 0; y < N; y++)
      for (let i = 0; i < 2 * N; i += 2) {
        const ar = rowsA[y]![i]!, ai = rowsA[y]![i + 1]!, br = rowsB[y]![i]!, bi = rowsB[y]![i + 1]!;
        rowsA[y]![i] = ar * br + ai * bi;
        rowsA[y]![i + 1] = ai * br - ar * bi;
      }
    columns(rowsA, true);
    for (let y = 0; y < N; y++) f.inverseTransform(rowsB[y]!, rowsA[y]!);
  };
  const rates: number[] = [];
  for (let r = 0; r < 3; r++) {
    const t0 = performance.now();
    let n = 0;
    while (performance.now() - t0 < 1000) {
      once();
      n++;
    }
    rates.push((n * 1000) / (performance.now() - t0));
  }
  return Math.round(median(rates));
}

async function throughput(): Promise<Record<string, unknown>[]> {
  const rows: Record<string, unknown>[] = [];
  for (const size of [1024, 2048]) {
    const { ref, meas } = synthPair({
      width: size,
      height: size,
      diameterPx: 2.8,
      dotsPerWindow: 10,
      seed: 3,
      bitDepth: 8,
      noiseSigma: 1,
      displacement: { kind: 'sine', amplitudePx: 3, wavelengthPx: 256, along: 'x', component: 'dy' },
    });
    for (const threads of [1, 2])
      for (const passes of [1, 3, 4]) {
        const times: number[] = [];
        let last: DisplacementResult | null = null;
        await measureDisplacement(ref, meas, { threads, passes }); // warm-up (workers start, buffers)
        for (let i = 0; i < 3; i++) {
          const t = performance.now();
          last = await measureDisplacement(ref, meas, { threads, passes });
          times.push(performance.now() - t);
        }
        const r = last!;
        const ms = median(times);
        const vectors = r.grid.cols * r.grid.rows;
        const stage: Record<string, number> = { setup: r.timingsMs.setup, prefilter: r.timingsMs.prefilter };
        r.passes.forEach((p, i) => {
          stage[`p${i + 1}.deform`] = p.ms.deform;
          stage[`p${i + 1}.correlate`] = p.ms.correlate;
          stage[`p${i + 1}.validate`] = p.ms.validate;
        });
        const total = r.timingsMs.total;
        const share = Object.fromEntries(Object.entries(stage).filter(([, v]) => v > 0.5).map(([k, v]) => [k, +((100 * v) / total).toFixed(1)]));
        rows.push({
          size: `${size}x${size}`,
          threads,
          passes,
          vectors,
          medianMs: +ms.toFixed(0),
          runsMs: times.map((t) => +t.toFixed(0)),
          vectorsPerSecond: Math.round((vectors / ms) * 1000),
          sharePercent: share,
          peakRssMiB: Math.round(process.resourceUsage().maxRSS / 1024),
        });
      }
  }
  process.stderr.write('\nthroughput, 32 px windows, 50 % overlap (median of 3; shared machine, ±30 %)\n');
  process.stderr.write('  size        threads passes vectors  median ms  vectors/s  peak RSS MiB  stage shares %\n');
  for (const r of rows)
    process.stderr.write(
      `  ${String(r.size).padEnd(11)} ${String(r.threads).padStart(5)} ${String(r.passes).padStart(6)} ${String(r.vectors).padStart(8)} ${String(r.medianMs).padStart(10)} ${String(
        r.vectorsPerSecond,
      ).padStart(10)} ${String(r.peakRssMiB).padStart(12)}  ${JSON.stringify(r.sharePercent)}\n`,
    );
  return rows;
}

/**
 * The same 2048² default run with the WebAssembly SIMD kernels and with the TypeScript kernels
 * (`RHOFIELD_KERNELS=js`), each in a fresh process (bench/speed-probe.ts), back to back, so the two
 * numbers see the same machine load.
 */
function kernelComparison(): Record<string, unknown> {
  const probe = fileURLToPath(new URL('../speed-probe.ts', import.meta.url));
  const once = (kernels: 'wasm' | 'js'): Record<string, unknown> => {
    const r = spawnSync(process.execPath, ['--import', 'tsx', probe, '2048', '2', '--json'], { env: { ...process.env, RHOFIELD_KERNELS: kernels }, encoding: 'utf8' });
    const line = r.stdout.trim().split('\n').pop() ?? '';
    return JSON.parse(line) as Record<string, unknown>;
  };
  const simd = once('wasm');
  const ts = once('js');
  process.stderr.write(
    `kernels, 2048² default passes, 2 threads, fresh processes: WebAssembly SIMD ${simd['vectorsPerSecond']} vectors/s, TypeScript ${ts['vectorsPerSecond']} vectors/s\n`,
  );
  return { simd, typescript: ts };
}

export async function run(): Promise<Record<string, unknown>> {
  const only = process.env.RHOFIELD_BENCH_PART;
  const out: Record<string, unknown> = { note: 'timings on a shared 2-core machine; expect ±30 %' };
  if (!only || only === 'accuracy') {
    process.stderr.write('\ndefault schedule (32 px windows):\n' + describeSchedule({ windowPx: 32 }).replace(/^/gm, '    ') + '\n');
    process.stderr.write('single pass (passes 1):\n' + describeSchedule({ windowPx: 32, passes: 1 }).replace(/^/gm, '    ') + '\n');
    out.uniformMultiPass = await uniformCase('uniform, default multi-pass (3 passes)', { windowPx: 32 }, 0, 0.02, 0.005);
    out.uniformSinglePass = await uniformCase('uniform, single pass', { windowPx: 32, passes: 1 }, 0, 0.06, null);
    out.uniformNoise1pc = await uniformCase('uniform, default multi-pass, noise σ = 1 % of dot peak', { windowPx: 32 }, 0.01, 0.04, null);
  }
  if (!only || only === 'accuracy' || only === 'sine') out.sine = await sineCases();
  if (!only || only === 'speed') {
    const baseline = fftJsBaseline();
    process.stderr.write(`\nmachine reference: plain fft.js row-column 32×32 cross-correlations, one core: ${baseline}/s\n`);
    const rows = await throughput();
    out.throughput = rows;
    out.fftJsCorrelationsPerSecondOneCore = baseline;
    const main = rows.find((r) => r['size'] === '2048x2048' && r['threads'] === 2 && r['passes'] === 3);
    if (main) {
      const v = main['vectorsPerSecond'] as number;
      out.target = { vectorsPerSecond: v, target: 16000, stretch: 22000, met: v >= 16000, stretchMet: v >= 22000, relativeToFftJsOneCore: +(v / baseline).toFixed(3) };
      process.stderr.write(
        `2048², 2 threads, default 3 passes: ${v} final vectors/s = ${(v / baseline).toFixed(2)} × the one-core fft.js reference (target 16,000${v >= 16000 ? ': met' : ': NOT met'}; stretch 22,000${v >= 22000 ? ': met' : ': not met'})\n`,
      );
    }
    out.kernels = kernelComparison();
  }
  await closeWorkers();
  return out;
}
