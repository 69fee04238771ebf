/**
 * `.npy` writer for fields: float32 `(rows, cols)` for a scalar field, `(rows, cols, 2)` for a
 * vector (x component first), 1-D float64 for coordinates. NaN is stored as NaN. Encoding by
 * {@link encodeNpy} (NumPy format 1.0; NEP 1, "A simple file format for NumPy arrays", 2007).
 */
import { writeFile } from 'node:fs/promises';
import { encodeNpy } from '../batch/npyArray.js';
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';

/**
 * Encode a scalar field (rows × cols) or a vector (rows × cols × 2, interleaved x, y) as `.npy`.
 * @param data one field, or the x and y components of a vector (same size).
 * @returns the file bytes.
 * @throws RhofieldError (usage) when the two components differ in size.
 */
export function fieldToNpy(data: Field | readonly [Field, Field]): Uint8Array {
  if ('data' in data) return encodeNpy(data.data, [data.height, data.width]);
  const [u, v] = data;
  if (u.width !== v.width || u.height !== v.height) {
    throw invalidParameter('vector components', `two fields of one size (${u.width}×${u.height})`, `${v.width}×${v.height}`);
  }
  const n = u.width * u.height;
  const out = new Float32Array(2 * n);
  for (let i = 0; i < n; i++) {
    out[2 * i] = u.data[i]!;
    out[2 * i + 1] = v.data[i]!;
  }
  return encodeNpy(out, [u.height, u.width, 2]);
}

/** Write a scalar field or a vector as `.npy` (see {@link fieldToNpy}). */
export async function writeNpy(path: string, data: Field | readonly [Field, Field]): Promise<void> {
  await writeFile(path, fieldToNpy(data));
}

/** Encode a 1-D float64 array (coordinates) as `.npy`. */
export function vectorToNpy(values: Float64Array | Int32Array): Uint8Array {
  return encodeNpy(values, [values.length]);
}
