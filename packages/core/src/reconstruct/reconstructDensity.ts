/**
 * Displacement field + setup → density (and temperature) on the vector grid.
 *
 * Steps: displacement (px, image frame) → deflection eps = −d·p/(M·Z_D) (optics/geometry.ts) →
 * planar: ∇ρ = n0·eps/(K·W) integrated by least squares and anchored on the reference region;
 * axisymmetric: deflection-form Abel inversion about the axis (given or found by symmetry).
 *
 * Output frame (the one place the y flip happens): x_m right, y_m UP, origin at
 * setup.geometry.originPx or the image centre. `deflectionY` and `gradY` are along +y_m (up), i.e.
 * minus their image-frame values; fields stay row-major with row 0 at the top of the image.
 */
import type { DisplacementField } from '../correlate/types.js';
import { deflectionPerPixel } from '../optics/geometry.js';
import { mediumConstants } from '../optics/medium.js';
import { pixelMapping } from '../optics/pixelMapping.js';
import type { Setup } from '../setup/schema.js';
import { invalidParameter, RhofieldError } from '../util/errors.js';
import type { Field } from '../util/field.js';
import { axisymmetricDensity } from './axisymmetricDensity.js';
import { findSymmetryAxis } from './findSymmetryAxis.js';
import { planarDensity, type PoissonSolver } from './planarDensity.js';
import { TEMPERATURE_NOTE, temperatureFromDensity } from './temperatureFromDensity.js';

/** Options of {@link reconstructDensity}. */
export interface ReconstructOptions {
  /** Planar solver: 'auto' (DCT when no vector is missing, else CG), 'dct', 'cg'. Default 'auto'. */
  readonly solver?: PoissonSolver;
  /** CG relative-residual tolerance. Default 1e-8. */
  readonly tolerance?: number;
}

/** Summary numbers of a reconstruction. */
export interface DensitySummary {
  /** Smallest / largest finite density, kg/m³ (NaN if none). */
  readonly min: number;
  readonly max: number;
  readonly referenceDensity: number;
  /** What the density was anchored to, in words. */
  readonly reference: string;
  /** 'dct' | 'cg' (planar) or 'abel' (axisymmetric). */
  readonly method: 'dct' | 'cg' | 'abel';
  /** CG iterations (0 otherwise). */
  readonly iterations: number;
}

/** Fixed-shape result of {@link reconstructDensity}; every Field has width = cols, height = rows. */
export interface DensityResult {
  readonly flowType: 'planar' | 'axisymmetric';
  /** Density, kg/m³; NaN where there is no data. */
  readonly rho: Field;
  /** Temperature, K, when medium.pressure and a gas constant are known; else null. */
  readonly temperature: Field | null;
  /** Deflection along +x_m (right), rad. */
  readonly deflectionX: Field;
  /** Deflection along +y_m (UP), rad. */
  readonly deflectionY: Field;
  /** ∂ρ/∂x_m, kg/m⁴ (planar: from the data; axisymmetric: central differences of rho). */
  readonly gradX: Field;
  /** ∂ρ/∂y_m (y UP), kg/m⁴. */
  readonly gradY: Field;
  /** x_m of each grid column, m. */
  readonly xM: Float64Array;
  /** y_m (up) of each grid row, m. */
  readonly yM: Float64Array;
  /** Distance to the axis, m (axisymmetric), else null. */
  readonly rM: Field | null;
  /** Axis position in px (column for a vertical axis, row for a horizontal one), else null. */
  readonly axisPx: number | null;
  /** Flow-plane size of one image pixel, m. */
  readonly pixelSizeM: number;
  /** Gladstone–Dale constant used, m³/kg, and the undisturbed refractive index. */
  readonly gladstoneDale: number;
  readonly n0: number;
  readonly summary: DensitySummary;
  /** Statements about assumptions (always present). */
  readonly notes: string[];
  /** Things the user should check. */
  readonly warnings: string[];
}

function field(cols: number, rows: number, src: ArrayLike<number>, scale = 1): Field {
  const data = new Float32Array(cols * rows);
  for (let i = 0; i < data.length; i++) data[i] = src[i]! * scale;
  return { width: cols, height: rows, data };
}

function uniformStep(v: Float64Array, name: string): number {
  if (v.length < 2) return NaN;
  const s = v[1]! - v[0]!;
  for (let i = 2; i < v.length; i++) {
    if (Math.abs(v[i]! - v[i - 1]! - s) > 1e-6 * Math.abs(s) + 1e-9) throw invalidParameter(name, 'a uniform vector-grid step', `steps ${s} and ${v[i]! - v[i - 1]!} px`);
  }
  if (!(s > 0)) throw invalidParameter(name, 'increasing window centres', v.slice(0, 3));
  return s;
}

/** Central differences (one-sided at edges and gaps) along x and y (image frame), per metre. */
function differences(rho: Float64Array, cols: number, rows: number, hx: number, hy: number): { gx: Float64Array; gy: Float64Array } {
  const gx = new Float64Array(cols * rows).fill(NaN);
  const gy = new Float64Array(cols * rows).fill(NaN);
  for (let y = 0; y < rows; y++) {
    for (let x = 0; x < cols; x++) {
      const p = x + y * cols;
      const c = rho[p]!;
      const l = x > 0 ? rho[p - 1]! : NaN, r = x + 1 < cols ? rho[p + 1]! : NaN;
      const u = y > 0 ? rho[p - cols]! : NaN, d = y + 1 < rows ? rho[p + cols]! : NaN;
      gx[p] = Number.isFinite(l) && Number.isFinite(r) ? (r - l) / (2 * hx) : Number.isFinite(r) ? (r - c) / hx : (c - l) / hx;
      gy[p] = Number.isFinite(u) && Number.isFinite(d) ? (d - u) / (2 * hy) : Number.isFinite(d) ? (d - c) / hy : (c - u) / hy;
    }
  }
  return { gx, gy };
}

/**
 * Reconstruct the density field from a measured displacement field.
 * @param displacement measured minus reference, px, image frame (+x right, +y down), on a uniform grid.
 * @param setup validated setup ({@link parseSetup}).
 * @param options solver choice and tolerance.
 * @returns {@link DensityResult} (fixed shape).
 * @throws RhofieldError when the displacement shape is inconsistent, the axis lies outside the image or
 *   cannot be found, or the reference region has no valid vector.
 */
export function reconstructDensity(displacement: DisplacementField, setup: Setup, options: ReconstructOptions = {}): DensityResult {
  const { grid, dxPx, dyPx } = displacement;
  const cols = grid.cols;
  const rows = grid.rows;
  const n = cols * rows;
  for (const [name, f] of [['dxPx', dxPx], ['dyPx', dyPx]] as const) {
    if (f.width !== cols || f.height !== rows || f.data.length !== n) {
      throw invalidParameter(`displacement.${name}`, `a ${cols}×${rows} field (the grid size)`, `${f.width}×${f.height}`);
    }
  }
  if (grid.xPx.length !== cols || grid.yPx.length !== rows) throw invalidParameter('displacement.grid', `${cols} x- and ${rows} y-centres`, `${grid.xPx.length} and ${grid.yPx.length}`);
  if (n === 0) throw invalidParameter('displacement.grid', 'at least one vector', '0×0 grid');
  const stepX = uniformStep(grid.xPx, 'displacement.grid.xPx');
  const stepY = uniformStep(grid.yPx, 'displacement.grid.yPx');
  const sx = Number.isFinite(stepX) ? stepX : Number.isFinite(stepY) ? stepY : 1;
  const sy = Number.isFinite(stepY) ? stepY : sx;

  const geom = {
    focalLength: setup.camera.focalLength,
    pixelPitch: setup.camera.pixelPitch,
    lensToBackground: setup.geometry.lensToBackground,
    flowToBackground: setup.geometry.flowToBackground,
  };
  const map = pixelMapping(geom, grid.imageWidth, grid.imageHeight, setup.geometry.originPx);
  const med = mediumConstants(setup.medium);
  const K = med.gladstoneDale;
  const n0 = med.n0;
  const rhoRef = setup.medium.referenceDensity;
  const kEps = deflectionPerPixel(geom);
  const epsX = new Float64Array(n);
  const epsY = new Float64Array(n); // image frame (+y down)
  for (let i = 0; i < n; i++) {
    epsX[i] = dxPx.data[i]! * kEps;
    epsY[i] = dyPx.data[i]! * kEps;
  }
  const hx = sx * map.pixelSizeM;
  const hy = sy * map.pixelSizeM;
  const notes: string[] = [
    `medium: ${med.description}, K = ${K.toPrecision(5)} m³/kg, n0 = ${n0.toFixed(7)}`,
    `flow-plane pixel size ${(map.pixelSizeM * 1e6).toPrecision(4)} µm; grid step ${(hx * 1e3).toPrecision(4)} mm`,
    'coordinates: x_m right, y_m up; deflectionY and gradY are along +y_m (up)',
  ];
  const warnings: string[] = [];
  if (setup.medium.gas !== undefined && setup.medium.gas !== 'air') notes.push(`K of ${setup.medium.gas} is its 589 nm value; it changes by about 1–2 % across the visible`);

  let rho: Float64Array;
  let gx: Float64Array;
  let gy: Float64Array; // image frame
  let rM: Field | null = null;
  let axisPx: number | null = null;
  let summaryRef: string;
  let method: DensitySummary['method'];
  let iterations = 0;
  const flow = setup.flow;
  if (flow.type === 'planar') {
    const c = n0 / (K * flow.span);
    gx = new Float64Array(n);
    gy = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const ok = Number.isFinite(epsX[i]!) && Number.isFinite(epsY[i]!);
      gx[i] = ok ? c * epsX[i]! : NaN;
      gy[i] = ok ? c * epsY[i]! : NaN;
    }
    const isRef = new Uint8Array(n);
    const ref = flow.reference;
    let what: string;
    if (typeof ref === 'string') {
      for (let y = 0; y < rows; y++) for (let x = 0; x < cols; x++) {
        const on = ref === 'top' ? y === 0 : ref === 'bottom' ? y === rows - 1 : ref === 'left' ? x === 0 : x === cols - 1;
        if (on) isRef[x + y * cols] = 1;
      }
      what = `the ${ref} edge of the vector grid`;
    } else {
      const [x0, y0, x1, y1] = ref.rectPx;
      let any = 0;
      for (let y = 0; y < rows; y++) for (let x = 0; x < cols; x++) {
        const px = grid.xPx[x]!, py = grid.yPx[y]!;
        if (px >= x0 && px <= x1 && py >= y0 && py <= y1) (isRef[x + y * cols] = 1), any++;
      }
      if (!any) {
        throw invalidParameter('flow.reference.rectPx', `a rectangle containing at least one window centre (grid x ${grid.xPx[0]}–${grid.xPx[cols - 1]} px, y ${grid.yPx[0]}–${grid.yPx[rows - 1]} px)`, ref.rectPx, 'enlarge the rectangle or move it into the measured area');
      }
      what = `rectangle [${ref.rectPx.join(', ')}] px`;
    }
    let nRef = 0;
    let nRefAll = 0;
    for (let i = 0; i < n; i++) if (isRef[i]) (nRefAll++, Number.isFinite(gx[i]!) && nRef++);
    if (nRef === 0) {
      throw new RhofieldError('input', `expected at least one valid vector in the reference region (${what}) for flow.reference but received a region whose ${nRefAll} vectors are all masked or failed; choose another reference edge or a rectPx over undisturbed, measured flow`);
    }
    const pd = planarDensity(gx, gy, cols, rows, hx, hy, isRef, rhoRef, options.solver ?? 'auto', options.tolerance ?? 1e-8);
    rho = pd.rho;
    method = pd.solver;
    iterations = pd.iterations;
    summaryRef = `${what}: mean density over its ${nRef} valid vectors set to ${rhoRef} kg/m³`;
    if (pd.unanchored > 0) warnings.push(`${pd.unanchored} vectors lie in regions not connected to the reference region and were left NaN`);
    notes.push(`planar: ∇ρ = n0·ε/(K·W) with span W = ${flow.span} m; density is the line-of-sight average over W`);
  } else {
    const vertical = flow.axis === 'vertical';
    // lines along the axis, samples across it; normal component (positive toward larger position)
    const lines = vertical ? rows : cols;
    const samples = vertical ? cols : rows;
    const positions = vertical ? grid.xPx : grid.yPx;
    const normal = new Float64Array(n);
    for (let l = 0; l < lines; l++) for (let s = 0; s < samples; s++) {
      normal[l * samples + s] = vertical ? epsX[s + l * cols]! : epsY[l + s * cols]!;
    }
    const extent = vertical ? grid.imageWidth : grid.imageHeight;
    let a: number;
    if (flow.axisPosition === 'auto') {
      a = findSymmetryAxis(normal, samples, lines, positions);
      if (!Number.isFinite(a)) {
        throw new RhofieldError('input', `could not find the ${flow.axis} axis by symmetry (too few vectors or no signal across the axis); give flow.axisPosition in px`);
      }
      notes.push(`axis found by mirror symmetry of the normal deflection at ${a.toFixed(2)} px`);
    } else {
      a = flow.axisPosition;
      if (a > extent - 1) {
        throw invalidParameter('flow.axisPosition', `a ${vertical ? 'column' : 'row'} inside the image (0–${extent - 1} px)`, a, 'measure the axis position on the image, or use "auto"');
      }
    }
    axisPx = a;
    const ax = axisymmetricDensity(normal, samples, lines, positions, a, n0, K, rhoRef);
    rho = new Float64Array(n);
    const rr = new Float32Array(n);
    for (let l = 0; l < lines; l++) for (let s = 0; s < samples; s++) {
      const p = vertical ? s + l * cols : l + s * cols;
      rho[p] = ax.rho[l * samples + s]!;
      rr[p] = ax.radiusPx[s]! * map.pixelSizeM;
    }
    rM = { width: cols, height: rows, data: rr };
    const d = differences(rho, cols, rows, hx, hy);
    gx = d.gx;
    gy = d.gy;
    method = 'abel';
    summaryRef = `far field beyond the measured radius set to ${rhoRef} kg/m³`;
    notes.push('axisymmetric: deflection-form Abel inversion (two-point), the two halves averaged; result mirrored about the axis; gradX/gradY are differences of rho');
  }
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = rho[i]!;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (min === Infinity) (min = NaN), (max = NaN);
  const rhoField = field(cols, rows, rho);
  let temperature: Field | null = null;
  if (setup.medium.pressure !== undefined) {
    if (med.gasConstant === null) {
      warnings.push('temperature not computed: medium.gladstoneDale gives no gas constant; name the gas or mixture instead');
    } else {
      temperature = temperatureFromDensity(rhoField, setup.medium.pressure, med.gasConstant);
      notes.push(TEMPERATURE_NOTE);
    }
  }
  if (setup.medium.mixture !== undefined || (setup.medium.gas !== undefined && setup.medium.gas !== 'air')) {
    warnings.push('composition is assumed uniform: K (and R) of the stated medium everywhere');
  }
  const xM = Float64Array.from(grid.xPx, (x) => map.xM(x));
  const yM = Float64Array.from(grid.yPx, (y) => map.yM(y));
  return {
    flowType: flow.type,
    rho: rhoField,
    temperature,
    deflectionX: field(cols, rows, epsX),
    deflectionY: field(cols, rows, epsY, -1),
    gradX: field(cols, rows, gx),
    gradY: field(cols, rows, gy, -1),
    xM,
    yM,
    rM,
    axisPx,
    pixelSizeM: map.pixelSizeM,
    gladstoneDale: K,
    n0,
    summary: { min, max, referenceDensity: rhoRef, reference: summaryRef, method, iterations },
    notes,
    warnings,
  };
}
