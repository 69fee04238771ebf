/**
 * Minimal reader/writer for NumPy `.npy` format version 1.0 (the open format described in NumPy's
 * "NEP 1 — A simple file format for NumPy arrays", 2007): a 10-byte preamble (`\x93NUMPY`, major 1,
 * minor 0, little-endian uint16 header length), an ASCII Python-dict header padded with spaces to a
 * multiple of 64 bytes and ending in `\n`, then the raw C-order data.
 *
 * The batch statistics need float64 arrays and must read back per-pair float32 results, so this codec
 * handles little-endian `<f4`, `<f8`, `<i4` and `<u4`, C order only. Pure functions on bytes.
 */
import { inputError } from '../util/errors.js';

/** Element types this codec handles. */
export type NpyDtype = '<f4' | '<f8' | '<i4' | '<u4';

/** A decoded array: C-order data and its shape. */
export interface NpyArray {
  readonly dtype: NpyDtype;
  readonly shape: readonly number[];
  readonly data: Float32Array | Float64Array | Int32Array | Uint32Array;
}

const MAGIC = [0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59];

function dtypeOf(data: NpyArray['data']): NpyDtype {
  if (data instanceof Float32Array) return '<f4';
  if (data instanceof Float64Array) return '<f8';
  if (data instanceof Int32Array) return '<i4';
  return '<u4';
}

/**
 * Encode an array as `.npy` bytes.
 * @param data C-order values; its type sets the dtype.
 * @param shape array shape; the product must equal `data.length`.
 * @throws RhofieldError if the shape does not match the data length.
 */
export function encodeNpy(data: NpyArray['data'], shape: readonly number[]): Uint8Array {
  const n = shape.reduce((a, b) => a * b, 1);
  if (n !== data.length) throw inputError(`npy: shape [${shape.join(', ')}] holds ${n} values but data has ${data.length}`);
  const shapeStr = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  let header = `{'descr': '${dtypeOf(data)}', 'fortran_order': False, 'shape': ${shapeStr}, }`;
  const total = 10 + header.length + 1;
  header += ' '.repeat((64 - (total % 64)) % 64) + '\n';
  const out = new Uint8Array(10 + header.length + data.byteLength);
  out.set(MAGIC, 0);
  out[6] = 1;
  out[7] = 0;
  out[8] = header.length & 0xff;
  out[9] = header.length >> 8;
  for (let i = 0; i < header.length; i++) out[10 + i] = header.charCodeAt(i);
  out.set(new Uint8Array(data.buffer, data.byteOffset, data.byteLength), 10 + header.length);
  return out;
}

/**
 * Decode `.npy` bytes (version 1.0 or 2.0, little-endian, C order).
 * @param bytes file contents.
 * @param label file name used in error messages.
 * @throws RhofieldError (input) naming `label` for a bad magic, an unsupported dtype, Fortran order
 *   or a truncated file.
 */
export function decodeNpy(bytes: Uint8Array, label = 'array'): NpyArray {
  for (let i = 0; i < 6; i++) {
    if (bytes[i] !== MAGIC[i]) throw inputError(`${label} is not a .npy file (bad magic); rerun the pair that wrote it`);
  }
  const major = bytes[6];
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const hlen = major === 1 ? dv.getUint16(8, true) : dv.getUint32(8, true);
  const hstart = major === 1 ? 10 : 12;
  let header = '';
  for (let i = 0; i < hlen; i++) header += String.fromCharCode(bytes[hstart + i] ?? 0);
  const descr = /'descr':\s*'([^']+)'/.exec(header)?.[1];
  const fortran = /'fortran_order':\s*(True|False)/.exec(header)?.[1];
  const shapeTxt = /'shape':\s*\(([^)]*)\)/.exec(header)?.[1];
  if (descr !== '<f4' && descr !== '<f8' && descr !== '<i4' && descr !== '<u4') {
    throw inputError(`${label}: expected dtype <f4, <f8, <i4 or <u4 but received ${String(descr)}`);
  }
  if (fortran !== 'False') throw inputError(`${label}: Fortran-order arrays are not supported; save in C order`);
  const shape = (shapeTxt ?? '')
    .split(',')
    .map((s) => s.trim())
    .filter((s) => s.length > 0)
    .map(Number);
  const n = shape.reduce((a, b) => a * b, 1);
  const start = hstart + hlen;
  const size = descr === '<f8' ? 8 : 4;
  if (bytes.byteLength - start < n * size) throw inputError(`${label} is truncated (${bytes.byteLength - start} of ${n * size} data bytes)`);
  // copy into an aligned buffer (the data offset is a multiple of 64 in v1 files, but the Uint8Array may not be aligned)
  // Uint8Array.prototype.slice copies even for a Node Buffer (whose own slice() shares memory)
  const raw = Uint8Array.prototype.slice.call(bytes, start, start + n * size).buffer;
  const data =
    descr === '<f4' ? new Float32Array(raw) : descr === '<f8' ? new Float64Array(raw) : descr === '<i4' ? new Int32Array(raw) : new Uint32Array(raw);
  return { dtype: descr, shape, data };
}
