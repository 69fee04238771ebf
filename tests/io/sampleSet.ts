/** A small, deliberately non-symmetric field set shared by the writer tests. */
import { VECTOR_STATUS_NAMES, type FieldSet, type Field } from '@rhofield/core';

export const COLS = 7;
export const ROWS = 5;

function field(f: (c: number, r: number) => number): Field {
  const data = new Float32Array(COLS * ROWS);
  for (let r = 0; r < ROWS; r++) for (let c = 0; c < COLS; c++) data[c + r * COLS] = f(c, r);
  return { width: COLS, height: ROWS, data };
}

/** rho = 1.2 + r/10 + c/100 + 1/3·1e-3 (not exactly representable), NaN at (c=5, r=1). */
export const rho = field((c, r) => (c === 5 && r === 1 ? NaN : 1.2 + r / 10 + c / 100 + 1e-3 / 3));
export const T = field((c, r) => 293.15 + 3 * c - 7 * r);
export const dx = field((c, r) => 0.25 * c - 0.1 * r + 1e-7);
export const dy = field((c, r) => -0.5 + 0.3 * r + 0.01 * c);
export const status = Uint8Array.from({ length: COLS * ROWS }, (_, i) => (i === 5 + 1 * COLS ? 2 : i % 11 === 3 ? 1 : 0));

/** grid: 16 px steps from (24, 24); metres with 0.1 mm/px, origin at px (64, 56), y up. */
export const xPx = Float64Array.from({ length: COLS }, (_, c) => 24 + 16 * c);
export const yPx = Float64Array.from({ length: ROWS }, (_, r) => 24 + 16 * r);
export const xM = Float64Array.from(xPx, (x) => (x - 64) * 1e-4);
export const yM = Float64Array.from(yPx, (y) => (56 - y) * 1e-4);

export const sampleSet: FieldSet = {
  title: 'sample result',
  grid: { xPx, yPx, xM, yM },
  fields: [
    { name: 'rho', units: 'kg/m^3', description: 'density', data: rho },
    { name: 'T', units: 'K', description: 'temperature (ideal gas, isobaric)', data: T },
    { name: 'dx', units: 'px', description: 'displacement along +x (right)', data: dx },
    { name: 'dy', units: 'px', description: 'displacement along +y (down)', data: dy },
  ],
  vectors: [{ name: 'displacement', x: 'dx', y: 'dy' }],
  categories: [{ name: 'status', description: 'vector status', codes: status, names: VECTOR_STATUS_NAMES }],
  attributes: { window_px: 32, overlap: 0.5, replaced_allowed: true },
  settings: { window: 32, passes: [64, 32], gas: 'air' },
};

/** Exact float32 comparison with NaN ↔ null; returns a description of the first mismatch or ''. */
export function mismatch(expected: Float32Array, got: readonly (number | null)[]): string {
  if (got.length !== expected.length) return `length ${got.length} vs ${expected.length}`;
  for (let i = 0; i < expected.length; i++) {
    const e = expected[i]!;
    const g = got[i];
    if (Number.isNaN(e) ? g !== null : g !== e) return `index ${i} (col ${i % COLS}, row ${Math.floor(i / COLS)}): expected ${e}, got ${g}`;
  }
  return '';
}
