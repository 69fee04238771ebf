/**
 * Whole-run speed of the command as a user runs it: `rhofield displacement REF MEAS --out DIR` with
 * the default outputs (figures, CSV, npy, result.json) on a 2048×2048 pair, timed as a fresh process
 * from start to exit, alternating with the plain numpy/scipy script bench/numpy_reference.py (Pillow
 * read, 32 px windows at 50 % overlap, batched float32 FFT correlation, Gaussian peak, normalized
 * median test, one integer-offset pass, CSV and .npy), median of ROUNDS runs each after one untimed
 * warm-up run each. `rhofield density` with a setup on the same pair runs in the same rounds.
 *
 * Pairs (the project's dot renderer, 16 bit, 2.8 px dots, 10 dots per 32 px window, no noise, as the
 * displacement bench's uniform cases): a uniform shift (3.17, −1.902) px, timed; and a smooth field
 * dx = 1.5 + sin(2πx/1024), dy = −0.8 + 0.8·cos(2πy/1024) px (truth taken at the window centres),
 * run once for accuracy.
 *
 * Targets:
 *  1. numpy median / rhofield displacement median ≥ 1.5;
 *  2. rhofield's RMS error on the uniform pair ≤ 0.009 px (RMS over vectors and both components);
 *  3. rhofield density median ≤ 1.4 × rhofield displacement median;
 *  4. goal, not a gate: peak RSS of the displacement run ≤ 256 MB (/usr/bin/time, else VmHWM).
 * Also reported: numpy's RMS on both pairs, rhofield's stage shares (result.json timingsSeconds over
 * the process wall time; "outside stages" = start-up, argument checks, result.json and exit). The
 * machine is shared (2 cores, other jobs running): expect ±30 % on single runs.
 *
 * The command is RHOFIELD_BENCH_CLI when set (e.g. the `rhofield` of an installed tarball), else the
 * one `packages/cli/package.json` names in `bin` (compiled code once the package builds to dist/),
 * else packages/cli/dist/bin/rhofield.js, else packages/cli/bin/rhofield.js.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { decodeNpy, saveImage16, synthPair, type DotDisplacement } from '@rhofield/core';

export const name = 'endToEndCli';

const SIZE = 2048;
const ROUNDS = 9;
const UNIFORM: [number, number] = [3.17, -1.902];
const smooth = (x: number, y: number): [number, number] => [1.5 + Math.sin((2 * Math.PI * x) / 1024), -0.8 + 0.8 * Math.cos((2 * Math.PI * y) / 1024)];
const PYTHON = '/usr/bin/python3';

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, '..', '..');
const cliDir = path.join(root, 'packages', 'cli');

function say(line: string): void {
  process.stderr.write(line + '\n');
}

/** The rhofield command file: RHOFIELD_BENCH_CLI, package.json `bin`, the compiled entry, the source entry. */
export function resolveCli(): { file: string; compiled: boolean; from: string } {
  const candidates: { file: string; from: string }[] = [];
  const fromEnv = process.env.RHOFIELD_BENCH_CLI;
  if (fromEnv) {
    if (!existsSync(fromEnv)) throw new Error(`RHOFIELD_BENCH_CLI=${fromEnv}: no such file`);
    candidates.push({ file: path.resolve(fromEnv), from: 'RHOFIELD_BENCH_CLI' });
  }
  try {
    const pkg = JSON.parse(readFileSync(path.join(cliDir, 'package.json'), 'utf8')) as { bin?: string | Record<string, string> };
    const bin = typeof pkg.bin === 'string' ? pkg.bin : pkg.bin?.rhofield;
    if (bin) candidates.push({ file: path.resolve(cliDir, bin), from: 'package.json bin' });
  } catch {
    // no readable package.json: fall through to the fixed paths
  }
  candidates.push({ file: path.join(cliDir, 'dist', 'bin', 'rhofield.js'), from: 'dist/bin' }, { file: path.join(cliDir, 'bin', 'rhofield.js'), from: 'bin (source)' });
  const hit = candidates.find((c) => existsSync(c.file));
  if (!hit) throw new Error(`no rhofield command found (tried ${candidates.map((c) => c.file).join(', ')})`);
  // compiled = not the TypeScript-through-tsx shim (which registers tsx at run time)
  const compiled = hit.file.split(path.sep).includes('dist') || !readFileSync(hit.file, 'utf8').includes('tsx');
  return { ...hit, compiled };
}

const TIME = existsSync('/usr/bin/time') ? '/usr/bin/time' : null;

interface Run {
  seconds: number;
  peakRssMB: number | null;
}

/**
 * Run a command as a fresh process; wall time from spawn to exit. Peak RSS from /usr/bin/time when
 * present, else the last VmHWM (the kernel's high-water mark of the resident set) read from
 * /proc/PID/status every 5 ms while the process runs.
 */
async function timed(cmd: string, args: string[]): Promise<Run> {
  const argv = TIME ? ['-f', 'RFBENCH_RSS_KB %M', cmd, ...args] : args;
  const t0 = performance.now();
  const child = spawn(TIME ?? cmd, argv, { cwd: root, stdio: ['ignore', 'ignore', 'pipe'] });
  let stderr = '';
  child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
  let hwmKb = 0;
  const poll = TIME
    ? null
    : setInterval(() => {
        try {
          const m = /VmHWM:\s+(\d+)/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
          if (m) hwmKb = Math.max(hwmKb, Number(m[1]));
        } catch {
          // process gone or no /proc
        }
      }, 5);
  const code = await new Promise<number | null>((resolve, reject) => {
    child.on('error', reject);
    child.on('close', resolve);
  });
  const seconds = (performance.now() - t0) / 1000;
  if (poll) clearInterval(poll);
  if (code !== 0) throw new Error(`${cmd} ${args.join(' ')} failed (${code}): ${stderr}`);
  const m = /RFBENCH_RSS_KB (\d+)/.exec(stderr);
  const kb = m ? Number(m[1]) : hwmKb;
  return { seconds, peakRssMB: kb > 0 ? +(kb / 1024).toFixed(1) : null };
}

function maxOf(v: readonly number[]): number | null {
  return v.length ? v.reduce((a, b) => (b > a ? b : a), -Infinity) : null;
}

function median(v: readonly number[]): number {
  const s = [...v].sort((a, b) => a - b);
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2]! : 0.5 * (s[n / 2 - 1]! + s[n / 2]!);
}

/** RMS over vectors and both components of (measured − truth); non-finite vectors counted apart. */
function rmsError(uv: Float32Array | Float64Array, xs: ArrayLike<number>, ys: ArrayLike<number>, truth: (x: number, y: number) => [number, number]): { rms: number; nonFinite: number; maxAbs: number } {
  let s2 = 0;
  let n = 0;
  let bad = 0;
  let maxAbs = 0;
  for (let k = 0; k < xs.length; k++) {
    const [tx, ty] = truth(xs[k]!, ys[k]!);
    const ex = uv[2 * k]! - tx;
    const ey = uv[2 * k + 1]! - ty;
    if (!Number.isFinite(ex) || !Number.isFinite(ey)) {
      bad++;
      continue;
    }
    s2 += ex * ex + ey * ey;
    n += 2;
    maxAbs = Math.max(maxAbs, Math.abs(ex), Math.abs(ey));
  }
  return { rms: +Math.sqrt(s2 / n).toFixed(5), nonFinite: bad, maxAbs: +maxAbs.toFixed(4) };
}

/** rhofield's result: displacement.npy (rows, cols, 2) on the grid of displacement_x_px / _y_px. */
function rhofieldError(dir: string, truth: (x: number, y: number) => [number, number]): ReturnType<typeof rmsError> {
  const uv = decodeNpy(readFileSync(path.join(dir, 'displacement.npy')));
  const gx = decodeNpy(readFileSync(path.join(dir, 'displacement_x_px.npy'))).data;
  const gy = decodeNpy(readFileSync(path.join(dir, 'displacement_y_px.npy'))).data;
  const xs: number[] = [];
  const ys: number[] = [];
  for (let r = 0; r < gy.length; r++) for (let c = 0; c < gx.length; c++) xs.push(gx[c]!), ys.push(gy[r]!);
  return rmsError(uv.data as Float32Array, xs, ys, truth);
}

/** The numpy script's result: displacement.npy (rows, cols, 2); window centres from its CSV. */
function numpyError(dir: string, truth: (x: number, y: number) => [number, number]): ReturnType<typeof rmsError> {
  const uv = decodeNpy(readFileSync(path.join(dir, 'displacement.npy')));
  const lines = readFileSync(path.join(dir, 'displacement.csv'), 'utf8').trim().split('\n').slice(1);
  const xs = lines.map((l) => Number(l.split(',')[0]));
  const ys = lines.map((l) => Number(l.split(',')[1]));
  return rmsError(uv.data as Float32Array, xs, ys, truth);
}

async function writePair(dir: string, label: string, displacement: DotDisplacement, seed: number): Promise<[string, string]> {
  const peak = 0.6 * 65535;
  const { ref, meas } = synthPair({ width: SIZE, height: SIZE, diameterPx: 2.8, dotsPerWindow: 10, seed, bitDepth: 16, peak, displacement });
  const a = path.join(dir, `${label}_ref.png`);
  const b = path.join(dir, `${label}_meas.png`);
  await saveImage16(ref, a);
  await saveImage16(meas, b);
  return [a, b];
}

export async function run(): Promise<Record<string, unknown>> {
  const cli = resolveCli();
  say(`rhofield command: ${path.relative(root, cli.file)} (${cli.from}${cli.compiled ? ', compiled' : ', source through tsx: not the final measurement'})`);
  const tmp = mkdtempSync(path.join(os.tmpdir(), 'rf-e2ecli-'));
  try {
    say(`making ${SIZE}×${SIZE} pairs in ${tmp} …`);
    const [uRef, uMeas] = await writePair(tmp, 'uniform', { kind: 'uniform', dx: UNIFORM[0], dy: UNIFORM[1] }, 21);
    const [sRef, sMeas] = await writePair(tmp, 'smooth', smooth, 22);
    const setupPath = path.join(tmp, 'setup.json');
    // the demo setup (heated plate, fixtures/demo/setup.json) with a 2048 px sensor
    writeFileSync(
      setupPath,
      JSON.stringify({
        camera: { focalLength: 0.1, fNumber: 11, pixelPitch: 5.5e-6, sensorPx: [SIZE, SIZE] },
        geometry: { lensToBackground: 2.0, flowToBackground: 0.8 },
        medium: { gas: 'air', wavelength: 5.3e-7, referenceDensity: 1.19, pressure: 101325 },
        flow: { type: 'planar', span: 0.06, reference: 'top' },
        expected: { densityChange: -0.12, lengthScale: 0.005 },
      }),
    );
    let k = 0;
    const out = () => path.join(tmp, `out${k++}`);
    const rfDisp = (ref: string, meas: string, dir: string) => timed(process.execPath, [cli.file, 'displacement', ref, meas, '--out', dir, '--quiet']);
    const rfDens = (dir: string) => timed(process.execPath, [cli.file, 'density', uRef, uMeas, '--setup', setupPath, '--out', dir, '--quiet']);
    const py = (ref: string, meas: string, dir: string) => timed(PYTHON, [path.join(here, '..', 'numpy_reference.py'), ref, meas, dir]);

    // accuracy (and warm-up): the smooth pair and one untimed run of each command
    const dS = out();
    const pS = out();
    await rfDisp(sRef, sMeas, dS);
    await py(sRef, sMeas, pS);
    const smoothRf = rhofieldError(dS, smooth);
    const smoothNp = numpyError(pS, smooth);
    const w1 = out();
    const w2 = out();
    const w3 = out();
    await rfDisp(uRef, uMeas, w1);
    await py(uRef, uMeas, w2);
    await rfDens(w3);
    const uniformRf = rhofieldError(w1, () => UNIFORM);
    const uniformNp = numpyError(w2, () => UNIFORM);
    for (const d of [dS, pS, w1, w2, w3]) rmSync(d, { recursive: true, force: true });

    const loadBefore = os.loadavg()[0]!;
    const disp: Run[] = [];
    const dens: Run[] = [];
    const nump: Run[] = [];
    const stages: Record<string, number[]> = {};
    const densStages: Record<string, number[]> = {};
    const collect = (dir: string, wall: number, into: Record<string, number[]>) => {
      const t = (JSON.parse(readFileSync(path.join(dir, 'result.json'), 'utf8')) as { timingsSeconds: Record<string, number> }).timingsSeconds;
      for (const [s, v] of Object.entries(t)) (into[s] ??= []).push(v / wall);
    };
    for (let r = 0; r < ROUNDS; r++) {
      const a = out();
      const run1 = await rfDisp(uRef, uMeas, a);
      disp.push(run1);
      collect(a, run1.seconds, stages);
      const b = out();
      nump.push(await py(uRef, uMeas, b));
      const c = out();
      const run3 = await rfDens(c);
      dens.push(run3);
      collect(c, run3.seconds, densStages);
      say(`round ${r + 1}/${ROUNDS}: rhofield displacement ${run1.seconds.toFixed(3)} s, numpy ${nump.at(-1)!.seconds.toFixed(3)} s, rhofield density ${run3.seconds.toFixed(3)} s`);
      for (const d of [a, b, c]) rmSync(d, { recursive: true, force: true });
    }
    const loadAfter = os.loadavg()[0]!;
    const mDisp = median(disp.map((x) => x.seconds));
    const mNump = median(nump.map((x) => x.seconds));
    const mDens = median(dens.map((x) => x.seconds));
    const ratio = mNump / mDisp;
    const densRatio = mDens / mDisp;
    const shares = (st: Record<string, number[]>) => {
      const o: Record<string, number> = {};
      let inside = 0;
      for (const [s, v] of Object.entries(st)) inside += (o[s] = +median(v).toFixed(3));
      o.outsideStages = +(1 - inside).toFixed(3);
      return o;
    };
    const rss = disp.map((x) => x.peakRssMB).filter((x): x is number => x !== null);
    const peakRss = maxOf(rss);
    const densRss = dens.map((x) => x.peakRssMB).filter((x): x is number => x !== null);
    const npRss = nump.map((x) => x.peakRssMB).filter((x): x is number => x !== null);

    say(`machine load (1-min average, ${os.cpus().length} CPUs): ${loadBefore.toFixed(1)} before the timed rounds, ${loadAfter.toFixed(1)} after`);
    say(`rhofield displacement: median ${mDisp.toFixed(3)} s over ${ROUNDS} runs; numpy script: median ${mNump.toFixed(3)} s; ratio numpy/rhofield ${ratio.toFixed(2)} (target ≥ 1.5)`);
    say(`RMS error, uniform (${UNIFORM.join(', ')}) px: rhofield ${uniformRf.rms} px (target ≤ 0.009), numpy ${uniformNp.rms} px`);
    say(`RMS error, smooth field: rhofield ${smoothRf.rms} px, numpy ${smoothNp.rms} px`);
    say(`rhofield displacement stage shares of the wall time: ${JSON.stringify(shares(stages))}`);
    say(`peak RSS: rhofield displacement ${peakRss ?? 'n/a'} MB (goal ≤ 256), density ${maxOf(densRss) ?? 'n/a'} MB, numpy ${maxOf(npRss) ?? 'n/a'} MB`);
    say(`rhofield density: median ${mDens.toFixed(3)} s = ${densRatio.toFixed(2)} × displacement (target ≤ 1.4); stage shares ${JSON.stringify(shares(densStages))}`);

    return {
      pair: `${SIZE}x${SIZE} px, 16 bit, 2.8 px dots, 10 dots per 32 px window, no noise; uniform (${UNIFORM.join(', ')}) px; smooth dx = 1.5 + sin(2πx/1024), dy = −0.8 + 0.8·cos(2πy/1024)`,
      command: { file: path.relative(root, cli.file), from: cli.from, compiled: cli.compiled },
      rounds: ROUNDS,
      loadAverage1min: { before: +loadBefore.toFixed(2), after: +loadAfter.toFixed(2), cpus: os.cpus().length },
      rhofieldDisplacement: { medianSeconds: +mDisp.toFixed(3), runs: disp.map((x) => +x.seconds.toFixed(3)), stageShares: shares(stages), peakRssMB: peakRss },
      numpyScript: { medianSeconds: +mNump.toFixed(3), runs: nump.map((x) => +x.seconds.toFixed(3)), peakRssMB: maxOf(npRss) },
      ratio: { value: +ratio.toFixed(2), target: '≥ 1.5', pass: ratio >= 1.5 },
      accuracy: {
        uniform: { rhofield: uniformRf, numpy: uniformNp, target: 'rhofield RMS ≤ 0.009 px', pass: uniformRf.rms <= 0.009 },
        smooth: { rhofield: smoothRf, numpy: smoothNp },
      },
      rhofieldDensity: {
        medianSeconds: +mDens.toFixed(3),
        runs: dens.map((x) => +x.seconds.toFixed(3)),
        stageShares: shares(densStages),
        peakRssMB: maxOf(densRss),
        ratioToDisplacement: +densRatio.toFixed(2),
        target: '≤ 1.4 × displacement',
        pass: densRatio <= 1.4,
      },
      peakRssGoal: { goal: '≤ 256 MB (not a gate)', met: peakRss !== null ? peakRss <= 256 : null },
    };
  } finally {
    rmSync(tmp, { recursive: true, force: true });
  }
}
