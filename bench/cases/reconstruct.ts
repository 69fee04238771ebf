/**
 * Reconstruction time on a 512×512 vector grid (planar Gaussian hot spot from exact displacements):
 * the DCT solver (no missing vectors) and the multigrid-preconditioned CG solver (a disc of missing
 * vectors), plus an axisymmetric Abel inversion of the same grid size. Medians over 5 runs; the
 * machine is shared, so expect ±30 %. End-to-end accuracy from rendered image pairs: the endToEnd case.
 */
import {
  axisymmetricGaussianScene,
  parseSetup,
  planarGaussianScene,
  reconstructDensity,
  sceneDensityOnGrid,
  sceneDisplacementOnGrid,
  type Field,
} from '@rhofield/core';
import type { DisplacementField, VectorGrid } from '../../packages/core/src/correlate/types.js';

export const name = 'reconstruct';

const N = 512;
const STEP = 8;
const base = {
  camera: { focalLength: 0.1, pixelPitch: 5e-6 },
  geometry: { lensToBackground: 2.1, flowToBackground: 1.05 },
  medium: { gas: 'air', wavelength: 532e-9, referenceDensity: 1.2 },
};

function grid(): VectorGrid {
  const c = Float64Array.from({ length: N }, (_, i) => STEP / 2 - 0.5 + i * STEP);
  return { cols: N, rows: N, xPx: c, yPx: c.slice(), imageWidth: N * STEP, imageHeight: N * STEP };
}
function field(g: VectorGrid, dx: Field, dy: Field): DisplacementField {
  const n = g.cols * g.rows;
  const one = { width: g.cols, height: g.rows, data: new Float32Array(n).fill(1) };
  return { grid: g, dxPx: dx, dyPx: dy, peakRatio: one, correlation: one, status: new Uint8Array(n) };
}
function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}
function rmsRel(a: Field, b: Field, peak: number): number {
  let e = 0;
  let n = 0;
  for (let i = 0; i < a.data.length; i++) if (Number.isFinite(a.data[i]!)) (e += (a.data[i]! - b.data[i]!) ** 2), n++;
  return Math.sqrt(e / n) / peak;
}

export async function run(): Promise<Record<string, unknown>> {
  const g = grid();
  const planar = parseSetup({ ...base, flow: { type: 'planar', span: 0.05, reference: 'top' } });
  const scene = planarGaussianScene(planar, { amplitude: -0.1, sigmaM: 30e-3 });
  const { dxPx, dyPx } = sceneDisplacementOnGrid(scene, planar, g);
  const truth = sceneDensityOnGrid(scene, planar, g);
  const dxM = { ...dxPx, data: dxPx.data.slice() };
  const dyM = { ...dyPx, data: dyPx.data.slice() };
  for (let r = 0; r < N; r++) for (let c = 0; c < N; c++) if ((c - 300) ** 2 + (r - 280) ** 2 < 60 ** 2) dxM.data[c + r * N] = dyM.data[c + r * N] = NaN;
  const axi = parseSetup({ ...base, flow: { type: 'axisymmetric', axis: 'vertical', axisPosition: N * STEP / 2 - 0.5 } });
  const jet = axisymmetricGaussianScene(axi, { amplitude: -0.2, sigmaM: 30e-3 });
  const ja = sceneDisplacementOnGrid(jet, axi, g);
  const out: Record<string, unknown> = { grid: `${N}x${N}`, runs: 5 };
  const cases: [string, () => ReturnType<typeof reconstructDensity>, Field][] = [
    ['dct', () => reconstructDensity(field(g, dxPx, dyPx), planar), truth],
    ['cgMaskedDisc', () => reconstructDensity(field(g, dxM, dyM), planar), truth],
    ['abelVertical', () => reconstructDensity(field(g, ja.dxPx, ja.dyPx), axi), sceneDensityOnGrid(jet, axi, g)],
  ];
  for (const [key, f, t] of cases) {
    const times: number[] = [];
    let last: ReturnType<typeof reconstructDensity> | null = null;
    for (let i = 0; i < 5; i++) {
      const t0 = performance.now();
      last = f();
      times.push(performance.now() - t0);
    }
    out[key] = {
      medianMs: +median(times).toFixed(1),
      timesMs: times.map((x) => +x.toFixed(1)),
      method: last!.summary.method,
      iterations: last!.summary.iterations,
      rmsErrorOfPeak: +rmsRel(last!.rho, t, key === 'abelVertical' ? 0.2 : 0.1).toExponential(3),
    };
    process.stderr.write(`${key}: median ${median(times).toFixed(1)} ms (${last!.summary.method}, ${last!.summary.iterations} it)\n`);
  }
  return out;
}
