/**
 * MATLAB Level 5 MAT-file output of a field set (MathWorks, "MAT-File Format", version 5 format
 * documentation): a 128-byte header (116 bytes of text, 8 bytes subsystem offset, version 0x0100,
 * endian indicator "IM" = little-endian), then one miMATRIX data element per variable, each
 * sub-element padded to 8 bytes.
 *
 * Variables (arrays are stored column-major, so `rho(row, col)` in MATLAB is image row `row`,
 * column `col`, 1-based; row 1 = top image row):
 * - each field as single, rows × cols (NaN = no data);
 * - `x_px` (1 × cols), `y_px` (rows × 1 … stored 1 × rows), `x_m`, `y_m` as double row vectors;
 * - each category as uint8 rows × cols, with `<name>_names` a char row "valid,replaced,…" (code k
 *   is the (k+1)-th word);
 * - `units` and `description`: structs with one char field per field name;
 * - `title`, `settings_json` (char) when present.
 */
import { writeFile } from 'node:fs/promises';
import { validateFieldSet, type FieldSet } from './fieldSet.js';

const miINT8 = 1;
const miUINT8 = 2;
const miUINT16 = 4;
const miINT32 = 5;
const miUINT32 = 6;
const miSINGLE = 7;
const miDOUBLE = 9;
const miMATRIX = 14;
const mxSTRUCT = 2;
const mxCHAR = 4;
const mxDOUBLE = 6;
const mxSINGLE = 7;
const mxUINT8 = 9;

/** One data element: 8-byte tag (type, byte count) + data padded to a multiple of 8. */
function element(type: number, data: Uint8Array): Buffer {
  const pad = (8 - (data.byteLength % 8)) % 8;
  const out = Buffer.alloc(8 + data.byteLength + pad);
  out.writeUInt32LE(type, 0);
  out.writeUInt32LE(data.byteLength, 4);
  out.set(data, 8);
  return out;
}

function bytesOf(a: Float32Array | Float64Array | Int32Array | Uint32Array | Uint16Array | Uint8Array): Uint8Array {
  return new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
}

function matrix(cls: number, dims: [number, number], name: string, dataType: number, data: Uint8Array): Buffer {
  const body = Buffer.concat([
    element(miUINT32, bytesOf(Uint32Array.of(cls, 0))),
    element(miINT32, bytesOf(Int32Array.of(dims[0], dims[1]))),
    element(miINT8, Buffer.from(name, 'ascii')),
    element(dataType, data),
  ]);
  return element(miMATRIX, body);
}

/** rows × cols, column-major from row-major `src`. */
function colMajor<T extends Float32Array | Uint8Array>(src: T, rows: number, cols: number, out: T): T {
  for (let r = 0; r < rows; r++) for (let c = 0; c < cols; c++) out[r + c * rows] = src[c + r * cols]!;
  return out;
}

function charArray(name: string, text: string): Buffer {
  const u16 = new Uint16Array(text.length);
  for (let i = 0; i < text.length; i++) u16[i] = text.charCodeAt(i);
  return matrix(mxCHAR, [1, text.length], name, miUINT16, bytesOf(u16));
}

function struct(name: string, fields: readonly [string, string][]): Buffer {
  const names = Buffer.alloc(32 * fields.length);
  fields.forEach(([k], i) => names.write(k.slice(0, 31), 32 * i, 'ascii'));
  const body = Buffer.concat([
    element(miUINT32, bytesOf(Uint32Array.of(mxSTRUCT, 0))),
    element(miINT32, bytesOf(Int32Array.of(1, 1))),
    element(miINT8, Buffer.from(name, 'ascii')),
    element(miINT32, bytesOf(Int32Array.of(32))),
    element(miINT8, names),
  ].concat(fields.map(([, v]) => charArray('', v))));
  return element(miMATRIX, body);
}

/**
 * Encode a field set as MAT-file v5 bytes (variables in the module comment).
 * @throws RhofieldError (usage) for an invalid set.
 */
export function fieldSetToMat(set: FieldSet): Buffer {
  const { cols, rows } = validateFieldSet(set);
  const header = Buffer.alloc(128, 0x20);
  header.write(`MATLAB 5.0 MAT-file, Platform: rhofield, Created on: ${new Date().toUTCString()}`.slice(0, 116), 0, 'ascii');
  header.fill(0, 116, 124);
  header.writeUInt16LE(0x0100, 124);
  header.write('IM', 126, 'ascii');
  const parts: Buffer[] = [header];
  for (const f of set.fields) {
    parts.push(matrix(mxSINGLE, [rows, cols], f.name, miSINGLE, bytesOf(colMajor(f.data.data, rows, cols, new Float32Array(rows * cols)))));
  }
  const vec = (name: string, v: Float64Array) => parts.push(matrix(mxDOUBLE, [1, v.length], name, miDOUBLE, bytesOf(Float64Array.from(v))));
  vec('x_px', set.grid.xPx);
  vec('y_px', set.grid.yPx);
  if (set.grid.xM) vec('x_m', set.grid.xM);
  if (set.grid.yM) vec('y_m', set.grid.yM);
  for (const c of set.categories ?? []) {
    parts.push(matrix(mxUINT8, [rows, cols], c.name, miUINT8, colMajor(c.codes, rows, cols, new Uint8Array(rows * cols))));
    parts.push(charArray(`${c.name}_names`, c.names.join(',')));
  }
  if (set.fields.length) {
    parts.push(struct('units', set.fields.map((f) => [f.name, f.units])));
    parts.push(struct('description', set.fields.map((f) => [f.name, f.description])));
  }
  if (set.title) parts.push(charArray('title', set.title));
  if (set.settings !== undefined) parts.push(charArray('settings_json', JSON.stringify(set.settings)));
  return Buffer.concat(parts);
}

/** Write a field set as a MAT-file v5 (see {@link fieldSetToMat}). */
export async function writeMat(path: string, set: FieldSet): Promise<void> {
  await writeFile(path, fieldSetToMat(set));
}
