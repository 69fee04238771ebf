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

/** 10⁰ … 10²² (every one exact in a double). */
const POW10 = Float64Array.from({ length: 23 }, (_, k) => 10 ** k);

/**
 * The shortest decimal string that parses back to the same float32 value ('' for NaN).
 *
 * Definition (and fallback path): the first p = 1 … 8 for which `Number(v.toPrecision(p))` rounds
 * back to v as a float32, else p = 9; written as `String(Number(…))`. The fast path computes the same
 * p-digit decimal with one double multiplication or division per p: for |v| in [10⁻⁵, 10¹⁵) the
 * scaled value x = |v|·10ᵏ (k = p − 1 − decade) is below 10⁹ and carries a relative error ≤ 2⁻⁵³,
 * so rounding x to the nearest integer n gives toPrecision's digits unless x lies within 2.5·10⁻⁷ of
 * a half (then the exact path runs); n·10⁻ᵏ (one correctly rounded operation on exact operands) is
 * then the same double that `Number` parses from the digits.
 * @param v a float32 value (as a JS number).
 */
export function formatFloat32(v: number): string {
  if (Number.isNaN(v)) return '';
  if (!Number.isFinite(v)) return v > 0 ? 'inf' : '-inf';
  if (v === 0) return '0';
  const a = v < 0 ? -v : v;
  if (a >= 1e-5 && a < 1e15) {
    let e = Math.floor(Math.log10(a));
    if (e >= 0 ? a < POW10[e]! : a * POW10[-e]! < 1) e--;
    for (let p = 1; p <= 9; p++) {
      const k = p - 1 - e;
      const x = k >= 0 ? a * POW10[k]! : a / POW10[-k]!;
      if (!(x >= POW10[p - 1]! && x < POW10[p]!)) break; // decade misjudged: exact path
      const fl = Math.floor(x);
      const frac = x - fl;
      if (Math.abs(frac - 0.5) < 2.5e-7) break; // too close to a tie: exact path
      const n = frac > 0.5 ? fl + 1 : fl;
      const d = k >= 0 ? n / POW10[k]! : n * POW10[-k]!;
      if (p === 9 || Math.fround(d) === a) return (v < 0 ? '-' : '') + decimalString(n, e + 1 - p);
    }
  }
  return formatFloat32Exact(v);
}

const ZEROS = Array.from({ length: 24 }, (_, k) => '0'.repeat(k));

/**
 * n·10^q (n a positive integer of at most 10 digits; the value in [10⁻⁶, 10²¹)) written as `String`
 * writes that number: plain decimal notation, no trailing zeros. A decimal of at most 15 significant
 * digits is the shortest string of the double nearest to it, so this equals `String(n·10^q)`.
 * Integer and fraction digits come from exact integer arithmetic (all values below 2⁵³).
 */
function decimalString(n: number, q: number): string {
  while (n % 10 === 0) {
    n /= 10;
    q++;
  }
  if (q >= 0) return String(n) + ZEROS[q]!;
  const div = POW10[-q]!;
  const ip = Math.floor(n / div);
  const fp = String(n - ip * div);
  return String(ip) + '.' + ZEROS[-q - fp.length]! + fp;
}

/** {@link formatFloat32} by its definition (toPrecision for p = 1 … 9). */
function formatFloat32Exact(v: number): string {
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
  // coordinates repeat on every row / column: format each once
  const xCell = Array.from(g.xPx, (x) => formatFloat64(x) + ',');
  const yCell = Array.from(g.yPx, (y) => formatFloat64(y));
  const xmCell = g.xM && g.yM ? Array.from(g.xM, formatFloat64) : null;
  const ymCell = g.xM && g.yM ? Array.from(g.yM, formatFloat64) : null;
  const data = set.fields.map((f) => f.data.data);
  const cats = set.categories ?? [];
  const chunks: string[] = [header.join(',') + '\n'];
  for (let r = 0; r < rows; r++) {
    let s = '';
    for (let c = 0; c < cols; c++) {
      const i = c + r * cols;
      s += xCell[c]! + yCell[r]!;
      if (xmCell && ymCell) s += ',' + xmCell[c]! + ',' + ymCell[r]!;
      for (const d of data) s += ',' + formatFloat32(d[i]!);
      for (const k of cats) s += ',' + (k.names[k.codes[i]!] ?? String(k.codes[i]));
      s += '\n';
    }
    chunks.push(s);
  }
  return chunks.join('');
}

/** Write a field set as CSV (see {@link fieldSetToCsv}). */
export async function writeCsv(path: string, set: FieldSet): Promise<void> {
  await writeFile(path, fieldSetToCsv(set));
}
