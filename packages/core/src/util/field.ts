/**
 * The one grid type of rhofield.
 *
 * Storage rule (stated once, here): a scalar field is `{ width, height, data }` with `data` a flat
 * `Float32Array` of length `width * height`, row-major, y down; the value of pixel (x, y) is
 * `data[x + y * width]`. Pixel centres sit at integer coordinates, so pixel (0, 0) covers
 * [-0.5, 0.5] × [-0.5, 0.5]. Vector fields are two such arrays named by component.
 * Missing data is NaN, never a silent 0.
 */
export interface Field {
  /** Number of columns. */
  readonly width: number;
  /** Number of rows. */
  readonly height: number;
  /** Row-major values, `data[x + y * width]`, y down. */
  readonly data: Float32Array;
}

/** A field of booleans stored as bytes (1 = use, 0 = ignore), same storage rule as {@link Field}. */
export interface MaskField {
  readonly width: number;
  readonly height: number;
  readonly data: Uint8Array;
}

/** Allocate a zero-filled field. */
export function createField(width: number, height: number, fill = 0): Field {
  const data = new Float32Array(width * height);
  if (fill !== 0) data.fill(fill);
  return { width, height, data };
}

/** Copy a field (inputs are never mutated by library functions). */
export function cloneField(f: Field): Field {
  return { width: f.width, height: f.height, data: f.data.slice() };
}
