/**
 * CSV output of a field set: one header row, then one row per grid point, rows of the grid in
 * order (row 0 first), columns left to right within a row.
 *
 * Columns: `x_px, y_px` (window centres, y down), `x_m, y_m` (when the grid has metres), one column
 * per field named `<name>_<unit slug>` (e.g. `dx_px`, `rho_kgm3`; dimensionless fields just
 * `<name>`), then one column per category holding the word (e.g. `valid`).
 * Numbers: float32 fields in the shortest decimal that reads back to the same float32; float64
 * coordinates in JavaScript's shortest round-trip form. NaN (no data) is an empty cell, which
 * numpy (`genfromtxt`), pandas and spreadsheets read as missing. Separator `,`, line end `\n`.
 */
import { writeFile } from 'node:fs/promises';
import { columnName, validateFieldSet, type FieldSet } from './fieldSet.js';

/**
 * The shortest decimal string that parses back to the same float32 value ('' for NaN).
 * @param v a float32 value (as a JS number).
 */
export function formatFloat32(v: number): string {
  if (Number.isNaN(v)) return '';
  if (!Number.isFinite(v)) return v > 0 ? 'inf' : '-inf';
  if (v === 0) return '0';
  for (let p = 1; p < 9; p++) {
    const s = v.toPrecision(p);
    if (Math.fround(Number(s)) === v) return String(Number(s));
  }
  return String(Number(v.toPrecision(9)));
}

function formatFloat64(v: number): string {
  return Number.isNaN(v) ? '' : String(v);
}

/**
 * Render a field set as CSV text (see the module comment for the layout).
 * @throws RhofieldError (usage) from {@link validateFieldSet}.
 */
export function fieldSetToCsv(set: FieldSet): string {
  const { cols, rows } = validateFieldSet(set);
  const g = set.grid;
  const header = ['x_px', 'y_px'];
  if (g.xM && g.yM) header.push('x_m', 'y_m');
  for (const f of set.fields) header.push(columnName(f.name, f.units));
  for (const c of set.categories ?? []) header.push(c.name);
  const lines = [header.join(',')];
  const cells: string[] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < cols; c++) {
      const i = c + r * cols;
      cells.length = 0;
      cells.push(formatFloat64(g.xPx[c]!), formatFloat64(g.yPx[r]!));
      if (g.xM && g.yM) cells.push(formatFloat64(g.xM[c]!), formatFloat64(g.yM[r]!));
      for (const f of set.fields) cells.push(formatFloat32(f.data.data[i]!));
      for (const k of set.categories ?? []) cells.push(k.names[k.codes[i]!] ?? String(k.codes[i]));
      lines.push(cells.join(','));
    }
  }
  return lines.join('\n') + '\n';
}

/** Write a field set as CSV (see {@link fieldSetToCsv}). */
export async function writeCsv(path: string, set: FieldSet): Promise<void> {
  await writeFile(path, fieldSetToCsv(set));
}
