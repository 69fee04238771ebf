/**
 * Field sets for the two main results, so every command writes them the same way.
 */
import type { DisplacementField } from '../correlate/types.js';
import { VECTOR_STATUS_NAMES } from '../correlate/types.js';
import type { DensityResult } from '../reconstruct/reconstructDensity.js';
import type { FieldSet, FieldSetField } from './fieldSet.js';

/** Extra metadata for a result field set. */
export interface ResultSetOptions {
  readonly title?: string;
  readonly attributes?: Readonly<Record<string, string | number | boolean>>;
  readonly settings?: unknown;
}

/**
 * Field set of a displacement result: `dx`, `dy` (px, image frame: +x right, +y down), `peak_ratio`,
 * `correlation` (dimensionless), category `status` (valid, replaced, masked, failed) and the vector
 * `displacement` (dx, dy).
 * @param d the measured displacement field.
 * @param options optional metre coordinates of the grid (`xM`, `yM`, y up) and metadata.
 */
export function displacementFieldSet(d: DisplacementField, options: ResultSetOptions & { xM?: Float64Array; yM?: Float64Array } = {}): FieldSet {
  return {
    title: options.title ?? 'displacement',
    grid: { xPx: d.grid.xPx, yPx: d.grid.yPx, ...(options.xM ? { xM: options.xM } : {}), ...(options.yM ? { yM: options.yM } : {}) },
    fields: [
      { name: 'dx', units: 'px', description: 'displacement along +x (right), measured minus reference', quantity: 'displacement dx', colormap: 'diverging', data: d.dxPx },
      { name: 'dy', units: 'px', description: 'displacement along +y (down, image rows), measured minus reference', quantity: 'displacement dy (down)', colormap: 'diverging', data: d.dyPx },
      { name: 'magnitude', units: 'px', description: 'displacement magnitude sqrt(dx² + dy²)', quantity: 'displacement |d|', colormap: 'sequential', data: magnitude(d) },
      { name: 'peak_ratio', units: '1', description: 'primary / secondary correlation peak height', quantity: 'peak ratio', colormap: 'sequential', data: d.peakRatio },
      { name: 'correlation', units: '1', description: 'normalised correlation coefficient at the peak', quantity: 'correlation', colormap: 'sequential', data: d.correlation },
    ],
    vectors: [{ name: 'displacement', x: 'dx', y: 'dy', frame: 'image' }],
    categories: [{ name: 'status', description: 'vector status', codes: d.status, names: VECTOR_STATUS_NAMES }],
    ...(options.attributes ? { attributes: options.attributes } : {}),
    ...(options.settings !== undefined ? { settings: options.settings } : {}),
  };
}

/**
 * Field set of a density result: `rho` (kg/m^3), `temperature` (K, when computed), `eps_x`, `eps_y`
 * (deflection, rad; y up), `drho_dx`, `drho_dy` (kg/m^4; y up), `r` (m, axisymmetric), the vector
 * `deflection` (frame y-up), and attributes (flow type, Gladstone–Dale constant, n0, pixel size,
 * reference density, method, notes, warnings).
 * @param r the reconstruction result; @param grid the vector grid (pixel coordinates).
 */
export function densityFieldSet(r: DensityResult, grid: { xPx: Float64Array; yPx: Float64Array }, options: ResultSetOptions = {}): FieldSet {
  const fields: FieldSetField[] = [
    { name: 'rho', units: 'kg/m^3', description: 'density', quantity: 'density ρ', colormap: 'sequential', data: r.rho },
  ];
  if (r.temperature) fields.push({ name: 'temperature', units: 'K', description: 'temperature from density (ideal gas at the given pressure)', quantity: 'temperature T', colormap: 'sequential', data: r.temperature });
  fields.push(
    { name: 'eps_x', units: 'rad', description: 'deflection angle along +x (right)', quantity: 'deflection εx', colormap: 'diverging', data: r.deflectionX },
    { name: 'eps_y', units: 'rad', description: 'deflection angle along +y (up)', quantity: 'deflection εy (up)', colormap: 'diverging', data: r.deflectionY },
    { name: 'drho_dx', units: 'kg/m^4', description: 'density gradient along +x', quantity: '∂ρ/∂x', colormap: 'diverging', data: r.gradX },
    { name: 'drho_dy', units: 'kg/m^4', description: 'density gradient along +y (up)', quantity: '∂ρ/∂y (up)', colormap: 'diverging', data: r.gradY },
  );
  if (r.rM) fields.push({ name: 'r', units: 'm', description: 'distance to the symmetry axis', data: r.rM, figure: false });
  return {
    title: options.title ?? 'density',
    grid: { xPx: grid.xPx, yPx: grid.yPx, xM: r.xM, yM: r.yM },
    fields,
    vectors: [{ name: 'deflection', x: 'eps_x', y: 'eps_y', frame: 'y-up' }],
    attributes: {
      flow_type: r.flowType,
      gladstone_dale_m3_per_kg: r.gladstoneDale,
      n0: r.n0,
      pixel_size_m: r.pixelSizeM,
      reference_density_kg_per_m3: r.summary.referenceDensity,
      reference: r.summary.reference,
      method: r.summary.method,
      notes: r.notes.join(' | '),
      warnings: r.warnings.join(' | '),
      ...(options.attributes ?? {}),
    },
    ...(options.settings !== undefined ? { settings: options.settings } : {}),
  };
}

function magnitude(d: DisplacementField): FieldSetField['data'] {
  const out = new Float32Array(d.dxPx.data.length);
  for (let i = 0; i < out.length; i++) out[i] = Math.hypot(d.dxPx.data[i]!, d.dyPx.data[i]!);
  return { width: d.dxPx.width, height: d.dxPx.height, data: out };
}
