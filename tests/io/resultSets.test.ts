import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { densityFieldSet, displacementFieldSet, fieldSetToCsv, fieldSetToVti, writeFieldSet, type DensityResult, type DisplacementField, type Field } from '@rhofield/core';

const dir = mkdtempSync(path.join(tmpdir(), 'rf-sets-'));
const C = 4;
const R = 3;
const f = (g: (c: number, r: number) => number): Field => {
  const data = new Float32Array(C * R);
  for (let r = 0; r < R; r++) for (let c = 0; c < C; c++) data[c + r * C] = g(c, r);
  return { width: C, height: R, data };
};
const xPx = Float64Array.of(16, 32, 48, 64);
const yPx = Float64Array.of(16, 32, 48);

/** Decode the 3-component vector array of a .vti (bottom row first) back to image row order. */
function vtiVector(vti: string, name: string): Float32Array {
  const m = new RegExp(`Name="${name}" NumberOfComponents="3" format="binary">([^<]+)<`).exec(vti)!;
  const raw = Buffer.from(m[1]!, 'base64');
  const vals = new Float32Array(raw.buffer.slice(raw.byteOffset + 4, raw.byteOffset + raw.length));
  const out = new Float32Array(3 * C * R);
  for (let j = 0; j < R; j++) out.set(vals.subarray(3 * C * j, 3 * C * (j + 1)), 3 * C * (R - 1 - j));
  return out;
}

describe('displacementFieldSet(d)', () => {
  const d: DisplacementField = {
    grid: { cols: C, rows: R, xPx, yPx, imageWidth: 80, imageHeight: 64 },
    dxPx: f((c) => c * 0.5),
    dyPx: f((_, r) => r - 1),
    peakRatio: f(() => 3),
    correlation: f(() => 0.9),
    status: Uint8Array.from({ length: C * R }, (_, i) => (i === 2 ? 3 : 0)),
  };
  it('has dx, dy, peak_ratio, correlation, status words and an image-frame vector (VTK y = −dy)', () => {
    const set = displacementFieldSet(d);
    expect(fieldSetToCsv(set).split('\n')[0]).toBe('x_px,y_px,dx_px,dy_px,magnitude_px,peak_ratio,correlation,status');
    expect(fieldSetToCsv(set).split('\n')[3]).toMatch(/,failed$/);
    const v = vtiVector(fieldSetToVti(set), 'displacement_px');
    for (let i = 0; i < C * R; i++) expect(v[3 * i + 1]).toBe(-d.dyPx.data[i]! + 0);
  });
});

describe('densityFieldSet(result, grid)', () => {
  const res = {
    flowType: 'planar',
    rho: f((c, r) => 1.2 - 0.01 * c - 0.02 * r),
    temperature: f((c, r) => 294 + c + 2 * r),
    deflectionX: f((c) => 1e-4 * c),
    deflectionY: f((_, r) => 2e-4 * r),
    gradX: f(() => -0.5),
    gradY: f(() => 0.25),
    xM: Float64Array.from(xPx, (x) => (x - 40) * 1e-4),
    yM: Float64Array.from(yPx, (y) => (32 - y) * 1e-4),
    rM: null,
    axisPx: null,
    pixelSizeM: 1e-4,
    gladstoneDale: 2.26e-4,
    n0: 1.00027,
    summary: { min: 1.13, max: 1.2, referenceDensity: 1.2, reference: 'top', method: 'dct', iterations: 0 },
    notes: ['isobaric'],
    warnings: [],
  } as unknown as DensityResult;
  it('rho, T, deflection (y up: VTK keeps the sign), gradients; metres grid; attributes; figures with vectors', async () => {
    const set = densityFieldSet(res, { xPx, yPx });
    expect(set.fields.map((x) => x.name)).toEqual(['rho', 'temperature', 'eps_x', 'eps_y', 'drho_dx', 'drho_dy']);
    const v = vtiVector(fieldSetToVti(set), 'deflection_rad');
    for (let i = 0; i < C * R; i++) expect(v[3 * i + 1]).toBe(res.deflectionY.data[i]);
    const files = await writeFieldSet(dir, 'density', set, ['svg'], { figure: { vectors: 'deflection' } });
    expect(files).toHaveLength(6);
    const svg = readFileSync(path.join(dir, 'density_rho.svg'), 'utf8');
    expect(svg).toContain('density ρ (kg/m^3)');
    expect(svg).toContain('x (mm)');
    expect(set.attributes!['gladstone_dale_m3_per_kg']).toBe(2.26e-4);
  });
  it('CSV columns as the issue names them: x_px,y_px,x_m,y_m,rho_kgm3,temperature_K (planar) and r_m (axisymmetric)', () => {
    expect(fieldSetToCsv(densityFieldSet(res, { xPx, yPx })).split('\n')[0]).toMatch(/^x_px,y_px,x_m,y_m,rho_kgm3,temperature_K,/);
    const axi = { ...res, flowType: 'axisymmetric', rM: f((c) => Math.abs(c - 1.5) * 1e-3) } as unknown as DensityResult;
    const head = fieldSetToCsv(densityFieldSet(axi, { xPx, yPx })).split('\n')[0]!.split(',');
    expect(head).toContain('r_m');
    expect(head.filter((c) => c.startsWith('r_'))).toEqual(['r_m']);
  });
});
