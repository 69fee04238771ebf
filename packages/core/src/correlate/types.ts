import type { Field } from '../util/field.js';

/** Per-vector status codes (stored as bytes). */
export const VectorStatus = {
  /** Measured and passed the normalized median test. */
  valid: 0,
  /** Failed the median test (or the peak search) and was replaced by the neighbour median. */
  replaced: 1,
  /** Window centre lies outside the mask; no value (NaN). */
  masked: 2,
  /** No usable correlation and no replacement possible; no value (NaN). */
  failed: 3,
} as const;
export type VectorStatusCode = (typeof VectorStatus)[keyof typeof VectorStatus];
export const VECTOR_STATUS_NAMES = ['valid', 'replaced', 'masked', 'failed'] as const;

/**
 * The vector grid: window centres in image pixels (pixel centres at integer coordinates).
 * Vector (c, r) sits at (xPx[c], yPx[r]); fields on this grid have width = cols, height = rows.
 */
export interface VectorGrid {
  readonly cols: number;
  readonly rows: number;
  /** Window-centre x of each column, image pixels. */
  readonly xPx: Float64Array;
  /** Window-centre y of each row, image pixels (y down). */
  readonly yPx: Float64Array;
  /** Image size the grid was laid on. */
  readonly imageWidth: number;
  readonly imageHeight: number;
}

/**
 * A measured displacement field: measured image minus reference, +x right, +y down, in pixels.
 * All fields have width = grid.cols, height = grid.rows. NaN where there is no value.
 */
export interface DisplacementField {
  readonly grid: VectorGrid;
  /** Displacement along +x (right), px. */
  readonly dxPx: Field;
  /** Displacement along +y (down), px. */
  readonly dyPx: Field;
  /** Primary / secondary correlation peak height ratio of the final pass (≥ 1; NaN if none). */
  readonly peakRatio: Field;
  /** Normalised correlation coefficient at the primary peak of the final pass (−1…1). */
  readonly correlation: Field;
  /** {@link VectorStatus} per vector, row-major. */
  readonly status: Uint8Array;
}
