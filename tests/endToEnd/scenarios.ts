/**
 * End-to-end density checks on synthetic image pairs, shared by tests/endToEnd/*.test.ts (small images)
 * and bench/cases/endToEnd.ts (realistic sizes).
 *
 * Chain: known density field (synth/density.ts) → apparent displacement d = −M·Z_D·eps/p per dot →
 * random-dot reference and measurement images (synth/dots.ts, exact pixel integration, 16 bit, noise)
 * → measureDisplacement (multi-pass window deformation) → reconstructDensity (setup) → errors against
 * the scene's density sampled at the window centres.
 *
 * Nothing here knows the scene's formulas: the metrics compare the reconstruction with
 * `sceneDensityOnGrid` (planar, axisymmetric) or with the oblique-shock density ratio of NACA Report
 * 1135 (Ames Research Staff, 1953, "Equations, tables, and charts for compressible flow", eq. 128 with
 * the θ-β-M relation eq. 139; its chart/table value ρ₂/ρ₁ = 1.45843 at M = 2, θ = 10°, γ = 1.4 is the
 * check value, typed by hand below).
 */
import {
  axisymmetricGaussianScene,
  measureDisplacement,
  obliqueShockScene,
  parseSetup,
  planarGaussianScene,
  reconstructDensity,
  sceneBackgroundMask,
  sceneDensityOnGrid,
  sceneDisplacement,
  synthPair,
  VectorStatus,
  type DensityResult,
  type DensityScene,
  type DisplacementResult,
  type Field,
  type MaskField,
  type MeasureDisplacementOptions,
  type Setup,
} from '@rhofield/core';

/** NACA Report 1135 (1953): oblique shock, M₁ = 2, θ = 10°, γ = 1.4, weak solution: ρ₂/ρ₁. */
export const NACA1135_DENSITY_RATIO_M2_THETA10 = 1.45843;

/** Image and correlation settings of one run. */
export interface RunSettings {
  /** Square image side, px. */
  readonly sizePx: number;
  /** Final interrogation window, px (step = half of it). */
  readonly windowPx: number;
  /** Seed of the dot pattern (noise uses seed + 1, seed + 2). */
  readonly seed: number;
  /** Worker threads for the correlation (default: the library's choice). */
  readonly threads?: number;
  /** Further correlation options (passes, step, …). */
  readonly correlate?: MeasureDisplacementOptions;
}

/**
 * Dots: e⁻² diameter 3 px, 10 dots per 32×32 px (common practice for BOS/PIV backgrounds: 2–4 px dots,
 * ≥ 8 per window), 16-bit images, dot peak 60 % of full scale, background 5 %, additive Gaussian
 * noise 0.5 % of full scale (≈ 330 counts; a scientific camera's read + shot noise at mid-scale is of
 * this order — common practice, not a measured value).
 */
const DOTS = { diameterPx: 3, dotsPerWindow: 10, bitDepth: 16 as const, noiseSigma: 0.005 * 65535 };

/** Everything a check needs: the measured displacement, the reconstruction and the truth on the grid. */
export interface EndToEndRun {
  readonly setup: Setup;
  readonly displacement: DisplacementResult;
  readonly density: DensityResult;
  readonly truth: Field;
  /** Largest |d| of the exact displacement over the image, px (sampled every 2 px). */
  readonly peakDisplacementPx: number;
  /** Wall times, ms. */
  readonly ms: { render: number; correlate: number; reconstruct: number };
}

/** Largest magnitude of a displacement callback over the image, sampled every 2 px. */
function peakOf(d: (x: number, y: number) => [number, number], w: number, h: number): number {
  let m = 0;
  for (let y = 0; y < h; y += 2) for (let x = 0; x < w; x += 2) {
    const v = Math.hypot(...d(x, y));
    if (Number.isFinite(v) && v > m) m = v;
  }
  return m;
}

/**
 * Render the pair through `scene`, measure, reconstruct. A body (scene.hidden) is painted as a flat
 * dark area (the background level) in both images and passed to the correlator as a mask; dots whose
 * reference position lies behind the body are not moved (they are painted over anyway).
 */
export async function runThroughImages(scene: DensityScene, setup: Setup, s: RunSettings, correlate: MeasureDisplacementOptions = {}): Promise<EndToEndRun> {
  const W = s.sizePx;
  const H = s.sizePx;
  const exact = sceneDisplacement(scene, setup, W, H);
  const disp = (x: number, y: number): [number, number] => {
    const [a, b] = exact(x, y);
    return Number.isFinite(a) && Number.isFinite(b) ? [a, b] : [0, 0];
  };
  const t0 = performance.now();
  const { ref, meas } = synthPair({ width: W, height: H, seed: s.seed, ...DOTS, windowPx: s.windowPx, displacement: disp });
  let mask: MaskField | undefined;
  const bodyArea = sceneBackgroundMask(scene, setup, W, H);
  if (bodyArea.data.includes(0)) {
    mask = bodyArea;
    const dark = Math.round(0.05 * 65535);
    for (let i = 0; i < mask.data.length; i++) if (!mask.data[i]) ref.data[i] = meas.data[i] = dark;
  }
  const t1 = performance.now();
  const displacement = await measureDisplacement(ref, meas, {
    windowPx: s.windowPx,
    ...(mask ? { mask } : {}),
    ...(s.threads !== undefined ? { threads: s.threads } : {}),
    ...correlate,
    ...(s.correlate ?? {}),
  });
  const t2 = performance.now();
  const density = reconstructDensity(displacement, setup);
  const t3 = performance.now();
  return {
    setup,
    displacement,
    density,
    truth: sceneDensityOnGrid(scene, setup, displacement.grid),
    peakDisplacementPx: peakOf(exact, W, H),
    ms: { render: t1 - t0, correlate: t2 - t1, reconstruct: t3 - t2 },
  };
}

/** Flow-plane pixel of {@link labSetup}, hand-worked: p·Z_A·(Z_B − f)/(f·Z_B) = 5e-6·1.0·1.9/(0.1·2.0) m. */
export const LAB_PIXEL_M = 47.5e-6;
/** Flow-plane pixel of {@link tunnelSetup}, hand-worked: 5e-6·1.7·1.9/(0.1·2.0) m. */
export const TUNNEL_PIXEL_M = 80.75e-6;

// ---------------------------------------------------------------------------------------------------
// Setups. Camera: 100 mm lens, 5 µm pixels (common machine-vision values).

/**
 * Lab setup for the planar and axisymmetric cases: background 2.0 m from the lens, flow midway
 * (Z_D = 1.0 m): M = 0.1/1.9 = 0.05263, 47.5 µm per pixel in the flow plane, 10 526 px of
 * displacement per radian of deflection.
 */
export function labSetup(flow: Record<string, unknown>): Setup {
  return parseSetup({
    camera: { focalLength: 0.1, fNumber: 11, pixelPitch: 5e-6 },
    geometry: { lensToBackground: 2.0, flowToBackground: 1.0 },
    medium: { gas: 'air', wavelength: 532e-9, referenceDensity: 1.2, pressure: 101325 },
    flow,
  });
}

/**
 * Supersonic tunnel setup for the wedge: background 2.0 m from the lens, test section 0.3 m in front of
 * it (a shock deflects ~100× more than a warm plume; moving the flow toward the background keeps the
 * displacements at a few pixels), span 50 mm. Free stream: Mach 2 expanded isentropically from room
 * stagnation conditions (1.2 kg/m³): ρ₁ = 1.2·(1 + 0.2·2²)^(−2.5) = 0.2760 kg/m³ (isentropic relation,
 * NACA Report 1135 eq. 45). Flow-plane pixel 80.75 µm.
 */
export function tunnelSetup(): Setup {
  return parseSetup({
    camera: { focalLength: 0.1, fNumber: 11, pixelPitch: 5e-6 },
    geometry: { lensToBackground: 2.0, flowToBackground: 0.3 },
    medium: { gas: 'air', wavelength: 532e-9, referenceDensity: 1.2 * 1.8 ** -2.5 },
    flow: { type: 'planar', span: 0.05, reference: 'left' },
  });
}

// ---------------------------------------------------------------------------------------------------
// 1. Planar Gaussian hot spot.

export interface PlanarCheck {
  readonly sigmaPx: number;
  readonly sigmaWindows: number;
  readonly amplitude: number;
  /** RMS of (ρ_rec − ρ_true) over every grid node, ρ_rec anchored by the setup (top edge mean = ρ_ref), / |Δρ|. */
  readonly rmsRelative: number;
  /** Same after removing the mean difference (shape error only). */
  readonly rmsRelativeShape: number;
  /** Largest |ρ_rec − ρ_true| / |Δρ|. */
  readonly maxRelative: number;
  /** Reconstructed Δρ at the grid node nearest the centre / true Δρ there. */
  readonly centreRatio: number;
  readonly run: EndToEndRun;
}

/**
 * Planar Gaussian density deficit Δρ·exp(−r²/2σ²) centred in the image, σ = `sigmaWindows` final
 * windows, uniform over a 50 mm span; reference: the top edge of the vector grid (4σ or more away).
 */
export async function planarCheck(s: RunSettings, sigmaWindows: number, amplitude = -0.1): Promise<PlanarCheck> {
  const setup = labSetup({ type: 'planar', span: 0.05, reference: 'top' });
  const px = LAB_PIXEL_M;
  const sigmaPx = sigmaWindows * s.windowPx;
  const scene = planarGaussianScene(setup, { amplitude, sigmaM: sigmaPx * px });
  const run = await runThroughImages(scene, setup, s);
  const r = run.density.rho.data;
  const t = run.truth.data;
  let e2 = 0, e1 = 0, n = 0, worst = 0;
  for (let i = 0; i < t.length; i++) {
    if (!Number.isFinite(r[i]!)) continue;
    const e = r[i]! - t[i]!;
    (e2 += e * e), (e1 += e), n++;
    worst = Math.max(worst, Math.abs(e));
  }
  const g = run.displacement.grid;
  const cc = nearest(g.xPx, (s.sizePx - 1) / 2);
  const cr = nearest(g.yPx, (s.sizePx - 1) / 2);
  const ci = cc + cr * g.cols;
  const rho0 = setup.medium.referenceDensity;
  return {
    sigmaPx,
    sigmaWindows,
    amplitude,
    rmsRelative: Math.sqrt(e2 / n) / Math.abs(amplitude),
    rmsRelativeShape: Math.sqrt(e2 / n - (e1 / n) ** 2) / Math.abs(amplitude),
    maxRelative: worst / Math.abs(amplitude),
    centreRatio: (r[ci]! - rho0) / (t[ci]! - rho0),
    run,
  };
}

function nearest(v: Float64Array, x: number): number {
  let best = 0;
  for (let i = 1; i < v.length; i++) if (Math.abs(v[i]! - x) < Math.abs(v[best]! - x)) best = i;
  return best;
}

// ---------------------------------------------------------------------------------------------------
// 2. Axisymmetric Gaussian deficit (a warm round jet seen side-on).

export interface AxisymmetricCheck {
  /** Radius parameter of Δρ·exp(−r²/R²), px, and the standard deviation R/√2 in final windows. */
  readonly radiusPx: number;
  readonly stdWindows: number;
  readonly amplitude: number;
  readonly axisPx: number;
  /** Axis position found by symmetry, px. */
  readonly axisFoundPx: number;
  /** Centre line: per grid row, Δρ_rec/Δρ_true − 1 at the node nearest the axis (interior rows). */
  readonly centreLineMeanError: number;
  readonly centreLineWorstRowError: number;
  readonly centreLineRows: number;
  /** RMS of ρ_rec − ρ_true over all interior nodes / |Δρ| (for information). */
  readonly rmsRelative: number;
  readonly run: EndToEndRun;
}

/**
 * Vertical axis 5.3 px right of the image centre (not on a grid node), found by symmetry ('auto').
 * Centre-line rows: all grid rows (the field is uniform along the axis); reference density: far from
 * the axis (the Abel inversion's own anchoring, ρ → ρ_ref beyond the measured radius).
 */
export async function axisymmetricCheck(s: RunSettings, stdWindows: number, amplitude = -0.2): Promise<AxisymmetricCheck> {
  const setup = labSetup({ type: 'axisymmetric', axis: 'vertical', axisPosition: 'auto' });
  const px = LAB_PIXEL_M;
  const radiusPx = stdWindows * s.windowPx * Math.SQRT2;
  const axisOffsetPx = 5.3;
  const scene = axisymmetricGaussianScene(setup, { amplitude, sigmaM: radiusPx * px, axisM: axisOffsetPx * px });
  const run = await runThroughImages(scene, setup, s);
  const axisPx = (s.sizePx - 1) / 2 + axisOffsetPx;
  const g = run.displacement.grid;
  const col = nearest(g.xPx, axisPx);
  const rho0 = setup.medium.referenceDensity;
  const r = run.density.rho.data;
  const t = run.truth.data;
  let sum = 0, worst = 0, rowsN = 0, e2 = 0, n = 0;
  for (let row = 0; row < g.rows; row++) {
    const i = col + row * g.cols;
    const rel = (r[i]! - rho0) / (t[i]! - rho0) - 1;
    if (!Number.isFinite(rel)) continue;
    sum += rel;
    rowsN++;
    if (Math.abs(rel) > Math.abs(worst)) worst = rel;
  }
  for (let i = 0; i < t.length; i++) if (Number.isFinite(r[i]!)) (e2 += (r[i]! - t[i]!) ** 2), n++;
  return {
    radiusPx,
    stdWindows,
    amplitude,
    axisPx,
    axisFoundPx: run.density.axisPx ?? NaN,
    centreLineMeanError: sum / rowsN,
    centreLineWorstRowError: worst,
    centreLineRows: rowsN,
    rmsRelative: Math.sqrt(e2 / n) / Math.abs(amplitude),
    run,
  };
}

// ---------------------------------------------------------------------------------------------------
// 3. Oblique shocks from a 10° wedge at Mach 2.

export interface ShockCheck {
  readonly smoothingPx: number;
  readonly shockAngleDeg: number;
  /** Plateau nodes: ≥ `minShockDistanceWindows` final windows downstream of the shock and ≥ one window from the body. */
  readonly plateauNodes: number;
  readonly minShockDistanceWindows: number;
  /** (mean ρ over the plateau − ρ_ref) / (ρ₁·(1.45843 − 1)) − 1; ρ_ref is the anchored left edge = ρ₁. */
  readonly jumpErrorAnchored: number;
  /** (mean ρ over the plateau − mean ρ over the upstream nodes ≥ the same distance from the shock) / (ρ₁·0.45843) − 1. */
  readonly jumpErrorLocal: number;
  /** Largest |ρ − ρ₂|/(ρ₂ − ρ₁) of a single plateau node. */
  readonly plateauWorstNode: number;
  /** Measured ρ₂/ρ₁ (anchored). */
  readonly densityRatio: number;
  readonly run: EndToEndRun;
}

/**
 * Wedge apex at x = −0.36·(image width) from the centre on the centre line, pointing left, flow to +x;
 * both shocks leave through the top and bottom edges. Reference: the left edge of the vector grid
 * (free stream). The body is masked.
 */
export async function shockCheck(s: RunSettings, smoothingPx = 8, minShockDistanceWindows = 2): Promise<ShockCheck> {
  const setup = tunnelSetup();
  const px = TUNNEL_PIXEL_M;
  const apexXPx = -0.36 * s.sizePx;
  const scene = obliqueShockScene(setup, { mach: 2, wedgeHalfAngleDeg: 10, gamma: 1.4, apexM: [apexXPx * px, 0], smoothingPx });
  // median test: keep genuine vectors at the shock when their correlation peak is unambiguous
  const run = await runThroughImages(scene, setup, s, { medianKeepPeakRatio: 3 });
  const g = run.displacement.grid;
  const beta = scene.shockAngleRad;
  const theta = (10 * Math.PI) / 180;
  const ox = (s.sizePx - 1) / 2 + apexXPx;
  const oy = (s.sizePx - 1) / 2;
  const rho1 = setup.medium.referenceDensity;
  const jump = rho1 * (NACA1135_DENSITY_RATIO_M2_THETA10 - 1);
  const r = run.density.rho.data;
  const dMin = minShockDistanceWindows * s.windowPx;
  let sp = 0, np = 0, su = 0, nu = 0;
  const plateau: number[] = [];
  for (let row = 0; row < g.rows; row++) for (let c = 0; c < g.cols; c++) {
    const i = c + row * g.cols;
    const v = r[i]!;
    if (!Number.isFinite(v) || run.displacement.status[i] === VectorStatus.masked) continue;
    const x = g.xPx[c]! - ox;
    const y = Math.abs(g.yPx[row]! - oy);
    const toShock = x * Math.sin(beta) - y * Math.cos(beta); // signed distance to the shock, px, + downstream
    const toBody = x > 0 ? (x * Math.sin(theta) - y * Math.cos(theta)) : -Math.hypot(x, y); // + inside the body
    if (toShock >= dMin && toBody <= -s.windowPx) (sp += v), np++, plateau.push(v);
    else if (toShock <= -dMin) (su += v), nu++;
  }
  const meanP = sp / np;
  let worstNode = 0;
  for (const v of plateau) worstNode = Math.max(worstNode, Math.abs(v - (rho1 + jump)) / jump);
  return {
    smoothingPx,
    shockAngleDeg: (beta * 180) / Math.PI,
    plateauNodes: np,
    minShockDistanceWindows,
    jumpErrorAnchored: (meanP - rho1) / jump - 1,
    jumpErrorLocal: (meanP - su / nu) / jump - 1,
    plateauWorstNode: worstNode,
    densityRatio: meanP / rho1,
    run,
  };
}

/** One-line summary of a run's displacement statistics. */
export function displacementSummary(run: EndToEndRun): Record<string, number> {
  const c = run.displacement.counts;
  return {
    peakTrueDisplacementPx: +run.peakDisplacementPx.toFixed(3),
    vectors: run.displacement.grid.cols * run.displacement.grid.rows,
    replaced: c.replaced,
    masked: c.masked,
    failed: c.failed,
    correlateMs: Math.round(run.ms.correlate),
    reconstructMs: Math.round(run.ms.reconstruct),
  };
}
