/**
 * Dry run of a planned setup: render the reference and disturbed images the setup would record for a
 * known density field, process them (correlation + density reconstruction) and report the error of
 * the whole chain.
 *
 * Steps: (1) plan the setup ({@link planSetup}); (2) build the scene on an image crop of `sizePx`
 * centred on the optical axis: a planar Gaussian hot spot Δρ·exp(−r²/L²) over the span, an
 * axisymmetric Gaussian plume Δρ·exp(−r²/L²) about a vertical axis, or a wedge (default Mach 2, 10°) with its
 * attached oblique shocks (synth/density.ts); (3) the true displacement d = −M·Z_D·eps/p per pixel,
 * averaged over the defocus disc of the flow ({@link discBlur}, diameter (f/N)·Z_D/Z_B in object
 * space); (4) dot images with the planned dot image diameter and fill 0.4; (5) displacement by
 * correlation; (6) density by reconstructDensity; (7) errors against the scene.
 * The renderer and the correlator are passed in (`engines`), so this module depends only on their
 * shapes.
 */
import type { Field, MaskField } from '../util/field.js';
import { invalidParameter } from '../util/errors.js';
import type { Setup } from '../setup/schema.js';
import type { DisplacementField } from '../correlate/types.js';
import { axisymmetricGaussianScene, obliqueShockScene, planarGaussianScene, sceneDensityOnGrid, sceneDisplacement, type DensityScene } from '../synth/density.js';
import { reconstructDensity, type DensityResult } from '../reconstruct/reconstructDensity.js';
import { planSetup, type SetupPlan } from './planSetup.js';
import { discBlur } from './discBlur.js';

/** Known density fields of the dry run. */
export type SimulationFieldKind = 'gaussian' | 'plume' | 'shock';
export const SIMULATION_FIELD_KINDS: readonly SimulationFieldKind[] = ['gaussian', 'plume', 'shock'];

/** What the dry run needs from the dot renderer and the correlator. */
export interface SimulationEngines {
  /** Render a reference and a displaced image of random dots (e⁻² diameter in px, fill fraction). */
  renderPair(o: {
    width: number;
    height: number;
    dotDiameterPx: number;
    fill: number;
    seed: number;
    noise: number;
    displacement: (xPx: number, yPx: number) => [number, number];
    /** Where the background is visible (1) or hidden by a body (0); absent when nothing is hidden. */
    hidden?: MaskField;
  }): Promise<{ reference: Field; measurement: Field }> | { reference: Field; measurement: Field };
  /** Measure the displacement field between the two images. */
  measure(reference: Field, measurement: Field, o: { windowPx: number; firstWindowPx: number; mask?: MaskField }): Promise<DisplacementField> | DisplacementField;
}

/** Options of {@link simulateSetup}. */
export interface SimulateOptions {
  readonly field: SimulationFieldKind;
  /** Side of the rendered square crop, px (default 384). */
  readonly sizePx?: number;
  readonly seed?: number;
  /** Image noise, standard deviation relative to the dot peak (default 0.02). */
  readonly noise?: number;
  /** Final window, px, a power of two 16–128 (default: the plan's, raised to a power of two ≥ 16). */
  readonly windowPx?: number;
  /** Displacement noise assumed by the plan, px (default 0.05). */
  readonly noisePx?: number;
  /** Shock only: upstream Mach number (default 2). */
  readonly mach?: number;
  /** Shock only: wedge half-angle, degrees (default 10). */
  readonly wedgeHalfAngleDeg?: number;
}

/** Errors of the whole chain. */
export interface SimulationErrors {
  /** Largest |d| of the blurred true displacement at the window centres, px. */
  readonly peakDisplacementTruePx: number;
  /** Largest |d| measured, px. */
  readonly peakDisplacementMeasuredPx: number;
  /** Largest |d| the planner predicts (unblurred Gaussian model), px; NaN for the shock, which the planner does not model. */
  readonly peakDisplacementPlannedPx: number;
  /** RMS of measured − true displacement (both components, valid vectors), px. */
  readonly displacementRmsPx: number;
  /** Largest |ρ − ρ_ref| of the scene on the grid, kg/m³. */
  readonly densityPeakTrue: number;
  /** Largest |ρ − ρ_ref| reconstructed, kg/m³. */
  readonly densityPeakMeasured: number;
  /** RMS of reconstructed − true density after removing the mean difference, kg/m³. */
  readonly densityRms: number;
  /** densityRms / densityPeakTrue. */
  readonly densityRmsRelative: number;
}

/** Result of {@link simulateSetup}. */
export interface SimulationResult {
  readonly field: SimulationFieldKind;
  /** The setup as simulated (crop origin, flow type of the chosen field). */
  readonly setup: Setup;
  readonly plan: SetupPlan;
  readonly reference: Field;
  readonly measurement: Field;
  /** True displacement per pixel after the defocus blur, px. */
  readonly trueDx: Field;
  readonly trueDy: Field;
  readonly displacement: DisplacementField;
  readonly density: DensityResult;
  /** True density on the vector grid, kg/m³. */
  readonly trueDensity: Field;
  /** Background visibility (1 visible, 0 hidden by the wedge); undefined when nothing is hidden. */
  readonly mask: MaskField | undefined;
  /** Final interrogation window used, px. */
  readonly windowPx: number;
  readonly errors: SimulationErrors;
}

function bilinear(f: Field): (x: number, y: number) => number {
  return (x, y) => {
    const xc = Math.min(Math.max(x, 0), f.width - 1.000001);
    const yc = Math.min(Math.max(y, 0), f.height - 1.000001);
    const x0 = Math.floor(xc);
    const y0 = Math.floor(yc);
    const fx = xc - x0;
    const fy = yc - y0;
    const i = x0 + y0 * f.width;
    const d = f.data;
    return (1 - fy) * ((1 - fx) * d[i]! + fx * d[i + 1]!) + fy * ((1 - fx) * d[i + f.width]! + fx * d[i + f.width + 1]!);
  };
}

/**
 * Run the dry run.
 * @param setup a validated setup with camera.fNumber, camera.sensorPx and expected.
 * @param engines dot renderer and correlator.
 * @param opts field kind, crop size, seed, noise.
 * @throws RhofieldError (usage) for bad options or an incomplete setup.
 */
export async function simulateSetup(setup: Setup, engines: SimulationEngines, opts: SimulateOptions): Promise<SimulationResult> {
  if (!SIMULATION_FIELD_KINDS.includes(opts.field)) throw invalidParameter('field', `one of ${SIMULATION_FIELD_KINDS.join(', ')}`, opts.field);
  const size = opts.sizePx ?? 384;
  if (!(Number.isInteger(size) && size >= 64 && size <= 2048)) throw invalidParameter('sizePx', 'an integer 64–2048', size);
  const seed = opts.seed ?? 1;
  const o = (size - 1) / 2;
  const span = setup.flow.type === 'planar' ? setup.flow.span : undefined;
  const L = setup.expected?.lengthScale ?? NaN;
  const simSetup: Setup =
    opts.field === 'plume'
      ? { ...setup, geometry: { ...setup.geometry, originPx: [o, o] }, flow: { type: 'axisymmetric', axis: 'vertical', axisPosition: o } }
      : {
          ...setup,
          geometry: { ...setup.geometry, originPx: [o, o] },
          // the shock's upstream side is the left edge; the hot spot has undisturbed air at the top
          flow: { type: 'planar', span: span ?? 2 * L, reference: opts.field === 'shock' ? 'left' : 'top' },
        };
  const plan = planSetup(simSetup, { ...(opts.noisePx !== undefined ? { noisePx: opts.noisePx } : {}) });
  const drho = plan.densityChange;
  let scene: DensityScene;
  if (opts.field === 'gaussian') scene = planarGaussianScene(simSetup, { amplitude: drho, sigmaM: L / Math.SQRT2 });
  else if (opts.field === 'plume') scene = axisymmetricGaussianScene(simSetup, { amplitude: drho, sigmaM: L, axis: 'vertical', axisM: 0 });
  else scene = obliqueShockScene(simSetup, { mach: opts.mach ?? 2, wedgeHalfAngleDeg: opts.wedgeHalfAngleDeg ?? 10, apexM: [-0.25 * size * plan.flowPixelSize, 0], smoothingPx: 1 });

  // (3) true displacement per pixel, blurred by the defocus disc; bodies (NaN) are blurred as 0 and re-masked
  const disp = sceneDisplacement(scene, simSetup, size, size);
  const dx = new Float32Array(size * size);
  const dy = new Float32Array(size * size);
  const hidden = new Uint8Array(size * size);
  for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) {
    const [a, b] = disp(x, y);
    const i = x + y * size;
    if (Number.isFinite(a) && Number.isFinite(b)) {
      dx[i] = a;
      dy[i] = b;
    } else hidden[i] = 1;
  }
  const trueDx = discBlur({ width: size, height: size, data: dx }, plan.flowBlurPx);
  const trueDy = discBlur({ width: size, height: size, data: dy }, plan.flowBlurPx);
  let anyHidden = false;
  for (let i = 0; i < hidden.length; i++) if (hidden[i]) {
    trueDx.data[i] = trueDy.data[i] = NaN;
    anyHidden = true;
  }
  const ix = bilinear(trueDx);
  const iy = bilinear(trueDy);
  // visibility mask of the background (1 = visible), for the renderer and the correlator
  const mask: MaskField | undefined = anyHidden ? { width: size, height: size, data: hidden.map((h) => (h ? 0 : 1)) } : undefined;

  // (4) images, (5) correlation, (6) density
  const { reference, measurement } = await engines.renderPair({
    width: size,
    height: size,
    dotDiameterPx: plan.dotImageDiameterPx,
    fill: 0.4,
    seed,
    noise: opts.noise ?? 0.02,
    displacement: (x, y) => [ix(x, y), iy(x, y)],
    ...(mask ? { hidden: mask } : {}),
  });
  let windowPx = opts.windowPx;
  if (windowPx === undefined) {
    windowPx = 16;
    while (windowPx < plan.windowPx && windowPx < 128) windowPx *= 2;
  }
  if (!(Number.isInteger(windowPx) && windowPx >= 16 && windowPx <= 128 && (windowPx & (windowPx - 1)) === 0)) {
    throw invalidParameter('windowPx', 'a power of two 16–128 px', windowPx);
  }
  if (4 * windowPx > size) throw invalidParameter('sizePx', `at least 4 windows (${4 * windowPx} px) for ${windowPx} px windows`, size);
  const measured = await engines.measure(reference, measurement, { windowPx, firstWindowPx: Math.max(windowPx, plan.firstWindowPx), ...(mask ? { mask } : {}) });
  const density = reconstructDensity(measured, simSetup);
  const trueDensity = sceneDensityOnGrid(scene, simSetup, measured.grid);

  // (7) errors
  const g = measured.grid;
  let pT = 0, pM = 0, se = 0, n = 0;
  for (let r = 0; r < g.rows; r++) for (let c = 0; c < g.cols; c++) {
    const i = c + r * g.cols;
    const tx = ix(g.xPx[c]!, g.yPx[r]!);
    const ty = iy(g.xPx[c]!, g.yPx[r]!);
    const mx = measured.dxPx.data[i]!;
    const my = measured.dyPx.data[i]!;
    if (Number.isFinite(tx) && Number.isFinite(ty)) pT = Math.max(pT, Math.hypot(tx, ty));
    if (Number.isFinite(mx) && Number.isFinite(my)) {
      pM = Math.max(pM, Math.hypot(mx, my));
      if (Number.isFinite(tx) && Number.isFinite(ty)) {
        se += (mx - tx) ** 2 + (my - ty) ** 2;
        n++;
      }
    }
  }
  const rho0 = simSetup.medium.referenceDensity;
  let off = 0, m = 0, dT = 0, dM = 0;
  for (let i = 0; i < trueDensity.data.length; i++) {
    const t = trueDensity.data[i]!;
    const v = density.rho.data[i]!;
    if (Number.isFinite(t)) dT = Math.max(dT, Math.abs(t - rho0));
    if (Number.isFinite(v)) dM = Math.max(dM, Math.abs(v - rho0));
    if (Number.isFinite(t) && Number.isFinite(v)) {
      off += v - t;
      m++;
    }
  }
  off = m ? off / m : 0;
  let re = 0;
  for (let i = 0; i < trueDensity.data.length; i++) {
    const t = trueDensity.data[i]!;
    const v = density.rho.data[i]!;
    if (Number.isFinite(t) && Number.isFinite(v)) re += (v - off - t) ** 2;
  }
  const densityRms = m ? Math.sqrt(re / m) : NaN;
  return {
    field: opts.field,
    setup: simSetup,
    plan,
    reference,
    measurement,
    trueDx,
    trueDy,
    displacement: measured,
    density,
    trueDensity,
    mask,
    windowPx,
    errors: {
      peakDisplacementTruePx: pT,
      peakDisplacementMeasuredPx: pM,
      peakDisplacementPlannedPx: opts.field === 'shock' ? NaN : plan.maxDisplacementPx,
      displacementRmsPx: n ? Math.sqrt(se / (2 * n)) : NaN,
      densityPeakTrue: dT,
      densityPeakMeasured: dM,
      densityRms,
      densityRmsRelative: densityRms / dT,
    },
  };
}
