/**
 * VTK XML image data (`.vti`) output of a field set, for ParaView/VisIt.
 *
 * Encoding: `format="binary"` inline data, i.e. base64 of [UInt32 byte count, little-endian data]
 * encoded as one stream (the layout of VTK's own vtkXMLWriter for uncompressed data; VTK file
 * formats documentation, "XML File Formats", Kitware). Binary keeps NaN exactly.
 *
 * Orientation: VTK's y axis points up and the first point is at the bottom-left, as ParaView shows
 * it. Rows are therefore reordered so that y increases with the VTK row index: with metre
 * coordinates (y upward, rhofield's output frame) the bottom image row comes first; Origin is the
 * bottom-left grid point and Spacing the grid step, both in metres. Without metre coordinates the
 * points are placed in pixels at (x_px, −y_px). Point arrays are named `<name>_<unit slug>`
 * (e.g. `rho_kgm3`, `dx_px`; see {@link columnName}); scalar fields are written as they are (so
 * `dy_px` stays "+y down in the image"), while each vector of the set is written as a 3-component
 * array in the VTK frame (x, y up, 0): an image-frame y component is negated, a 'y-up' one kept,
 * so that glyphs point the way the image shows.
 */
import { writeFile } from 'node:fs/promises';
import { invalidParameter } from '../util/errors.js';
import { columnName, validateFieldSet, type FieldSet } from './fieldSet.js';

function b64Block(bytes: Uint8Array): string {
  const out = Buffer.alloc(4 + bytes.byteLength);
  out.writeUInt32LE(bytes.byteLength, 0);
  out.set(bytes, 4);
  return out.toString('base64');
}

function uniformStep(c: Float64Array, name: string): number {
  if (c.length < 2) return 1;
  const step = (c[c.length - 1]! - c[0]!) / (c.length - 1);
  for (let i = 1; i < c.length; i++) {
    if (Math.abs(c[i]! - c[i - 1]! - step) > 1e-6 * Math.abs(step)) {
      throw invalidParameter(name, 'uniformly spaced coordinates (VTK image data needs a regular grid)', `step ${c[i]! - c[i - 1]!} at index ${i} vs ${step}`);
    }
  }
  if (step === 0) throw invalidParameter(name, 'distinct coordinates', 'all equal');
  return step;
}

function num(v: number): string {
  return String(v);
}

/**
 * Render a field set as a `.vti` document (see the module comment).
 * @throws RhofieldError (usage) for an invalid set or non-uniform coordinates.
 */
export function fieldSetToVti(set: FieldSet): string {
  const { cols, rows } = validateFieldSet(set);
  const g = set.grid;
  const metres = !!(g.xM && g.yM);
  const xs = metres ? g.xM! : g.xPx;
  const ysUp = metres ? g.yM! : Float64Array.from(g.yPx, (v) => -v);
  const sx = uniformStep(xs, metres ? 'grid.xM' : 'grid.xPx');
  if (sx < 0) throw invalidParameter(metres ? 'grid.xM' : 'grid.xPx', 'coordinates increasing with the column', 'decreasing');
  const sy = uniformStep(ysUp, metres ? 'grid.yM' : 'grid.yPx');
  const flip = sy < 0; // row 0 has the largest y: bottom row first in VTK order
  const srcRow = (j: number) => (flip ? rows - 1 - j : j);
  const originY = flip ? ysUp[rows - 1]! : ysUp[0]!;
  const n = cols * rows;
  const reorder = (src: ArrayLike<number>, out: Float32Array | Uint8Array, comps = 1, comp = 0, sign = 1) => {
    for (let j = 0; j < rows; j++) {
      const r = srcRow(j);
      for (let c = 0; c < cols; c++) out[(c + j * cols) * comps + comp] = sign * src[c + r * cols]! + 0; // + 0: no -0
    }
  };
  const arrays: string[] = [];
  const add = (type: string, name: string, comps: number, bytes: Uint8Array) =>
    arrays.push(`        <DataArray type="${type}" Name="${name}" NumberOfComponents="${comps}" format="binary">${b64Block(bytes)}</DataArray>`);
  for (const f of set.fields) {
    const out = new Float32Array(n);
    reorder(f.data.data, out);
    add('Float32', columnName(f.name, f.units), 1, new Uint8Array(out.buffer));
  }
  for (const v of set.vectors ?? []) {
    const fx = set.fields.find((f) => f.name === v.x)!;
    const fy = set.fields.find((f) => f.name === v.y)!;
    const out = new Float32Array(3 * n);
    reorder(fx.data.data, out, 3, 0, 1);
    reorder(fy.data.data, out, 3, 1, v.frame === 'y-up' ? 1 : -1);
    add('Float32', columnName(v.name, fx.units), 3, new Uint8Array(out.buffer));
  }
  for (const c of set.categories ?? []) {
    const out = new Uint8Array(n);
    reorder(c.codes, out);
    add('UInt8', c.name, 1, out);
  }
  const ext = `0 ${cols - 1} 0 ${rows - 1} 0 0`;
  const first = set.fields[0];
  const notes = [
    `rhofield field set${set.title ? ': ' + set.title : ''}`,
    `coordinates in ${metres ? 'metres, y up' : 'pixels, y = -y_px'}; rows ordered bottom to top`,
  ].concat(
    set.fields.map((f) => `${columnName(f.name, f.units)}: ${f.description} [${f.units}]`),
    (set.categories ?? []).map((c) => `${c.name}: ${c.description}; codes ${c.names.map((s, i) => `${i}=${s}`).join(', ')}`),
  ).map((s) => s.replace(/--/g, '- -'));
  return [
    '<?xml version="1.0"?>',
    `<!--\n${notes.join('\n')}\n-->`,
    '<VTKFile type="ImageData" version="1.0" byte_order="LittleEndian" header_type="UInt32">',
    `  <ImageData WholeExtent="${ext}" Origin="${num(xs[0]!)} ${num(originY)} 0" Spacing="${num(sx)} ${num(Math.abs(sy))} 1">`,
    `    <Piece Extent="${ext}">`,
    `      <PointData${first ? ` Scalars="${columnName(first.name, first.units)}"` : ''}>`,
  ].concat(arrays, [
    '      </PointData>',
    '      <CellData>',
    '      </CellData>',
    '    </Piece>',
    '  </ImageData>',
    '</VTKFile>',
    '',
  ]).join('\n');
}

/** Write a field set as `.vti` (see {@link fieldSetToVti}). */
export async function writeVti(path: string, set: FieldSet): Promise<void> {
  await writeFile(path, fieldSetToVti(set));
}
