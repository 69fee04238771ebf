/**
 * The "field set": one description of a result on a vector grid that every writer understands, so
 * the CLI can write any subset of formats from the same object.
 *
 * - `grid`: coordinates of the columns/rows in image pixels (window centres, y down) and, when
 *   known, in metres of the flow plane (`yM` as given; rhofield outputs use y upward, docs/conventions.md).
 * - `fields`: scalar fields on the grid (width = columns, height = rows), each with a name (an
 *   identifier, used as dataset/variable name), units (free text such as `px`, `rad`, `kg/m^3`,
 *   `K`, `1`) and a description. NaN = no data.
 * - `vectors`: optional pairs of field names forming a vector (e.g. `displacement` from `dx`, `dy`):
 *   written as rows×cols×2 `.npy` and as a 3-component VTK array.
 * - `categories`: optional byte fields with named codes (e.g. vector status: valid, replaced, …).
 * - `attributes`: scalar metadata (strings, numbers, booleans); `settings`: any JSON value.
 *
 * A displacement result fits as fields dx, dy (px), peak_ratio, correlation (1) + vector
 * displacement + category status; a density result as rho (kg/m^3), T (K), drho_dx, drho_dy
 * (kg/m^4).
 */
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';

/** Grid coordinates of a field set. */
export interface FieldSetGrid {
  /** x of each column, image pixels (length = columns). */
  readonly xPx: Float64Array;
  /** y of each row, image pixels, y down (length = rows). */
  readonly yPx: Float64Array;
  /** x of each column in the flow plane, metres (optional). */
  readonly xM?: Float64Array;
  /** y of each row in the flow plane, metres (optional; rhofield uses y upward). */
  readonly yM?: Float64Array;
}

/** One scalar field of a set. */
export interface FieldSetField {
  /** Identifier `[A-Za-z][A-Za-z0-9_]*`: dataset, variable and file-name part. */
  readonly name: string;
  /** Units as free text, e.g. `px`, `rad`, `kg/m^3`, `K`, `1` (dimensionless). */
  readonly units: string;
  /** One-line description (written as an attribute where the format allows). */
  readonly description: string;
  /** Values on the grid (width = columns, height = rows); NaN = no data. */
  readonly data: Field;
  /**
   * Colour-map kind for figures: `sequential` (magnitudes, density), `diverging` (signed:
   * deflection, differences; centred on 0), `cyclic` (directions). Default: diverging when the
   * field has both signs, else sequential.
   */
  readonly colormap?: 'sequential' | 'diverging' | 'cyclic';
  /** Quantity label for figures (default: the description). */
  readonly quantity?: string;
  /** Set false to leave this field out of png/svg figures. */
  readonly figure?: boolean;
}

/** Two fields of the set forming a vector. */
export interface FieldSetVector {
  /** Identifier of the vector (e.g. `displacement`). */
  readonly name: string;
  /** Name of the field holding the x component. */
  readonly x: string;
  /** Name of the field holding the y component. */
  readonly y: string;
  /**
   * Frame of the y component: 'image' (+y down, the default; e.g. displacement) or 'y-up'
   * (+y up, the physical output frame; e.g. deflection in a density result). Writers convert
   * once where a format needs a fixed frame (VTK: y up; figures: as seen in the image).
   */
  readonly frame?: 'image' | 'y-up';
}

/** A field of byte codes with names (e.g. vector status). */
export interface FieldSetCategorical {
  readonly name: string;
  readonly description: string;
  /** Codes, row-major on the grid (length = columns × rows). */
  readonly codes: Uint8Array;
  /** `names[code]` is the word for a code. */
  readonly names: readonly string[];
}

/** A result on a vector grid, written by {@link writeFieldSet}. */
export interface FieldSet {
  readonly grid: FieldSetGrid;
  readonly fields: readonly FieldSetField[];
  readonly vectors?: readonly FieldSetVector[];
  readonly categories?: readonly FieldSetCategorical[];
  /** Title (figures, file attributes). */
  readonly title?: string;
  /** Scalar metadata. */
  readonly attributes?: Readonly<Record<string, string | number | boolean>>;
  /** Settings, any JSON value (written as a JSON string). */
  readonly settings?: unknown;
}

const IDENT = /^[A-Za-z][A-Za-z0-9_]*$/;

/**
 * Check a field set once, at the edge: identifiers, sizes of every field and coordinate array.
 * @throws RhofieldError (usage) naming the offending item, expected and received sizes.
 */
export function validateFieldSet(set: FieldSet): { cols: number; rows: number } {
  const cols = set.grid.xPx.length;
  const rows = set.grid.yPx.length;
  if (cols < 1 || rows < 1) throw invalidParameter('field set grid', 'at least one column and one row', `${cols}×${rows}`);
  if (set.grid.xM && set.grid.xM.length !== cols) throw invalidParameter('grid.xM', `${cols} values (one per column)`, set.grid.xM.length);
  if (set.grid.yM && set.grid.yM.length !== rows) throw invalidParameter('grid.yM', `${rows} values (one per row)`, set.grid.yM.length);
  const names = new Set<string>();
  const reserved = new Set(['x_px', 'y_px', 'x_m', 'y_m']);
  const claim = (name: string, what: string) => {
    if (!IDENT.test(name)) throw invalidParameter(`${what} name`, 'an identifier [A-Za-z][A-Za-z0-9_]*', name);
    if (names.has(name) || reserved.has(name)) throw invalidParameter(`${what} name`, 'a name not used twice (x_px, y_px, x_m, y_m are reserved)', name);
    names.add(name);
  };
  for (const f of set.fields) {
    claim(f.name, 'field');
    if (f.data.width !== cols || f.data.height !== rows || f.data.data.length !== cols * rows) {
      throw invalidParameter(`field ${f.name}`, `${cols}×${rows} values (the grid)`, `${f.data.width}×${f.data.height}`);
    }
  }
  for (const c of set.categories ?? []) {
    claim(c.name, 'category');
    if (c.codes.length !== cols * rows) throw invalidParameter(`category ${c.name}`, `${cols * rows} codes`, c.codes.length);
  }
  for (const v of set.vectors ?? []) {
    claim(v.name, 'vector');
    for (const comp of [v.x, v.y]) {
      if (!set.fields.some((f) => f.name === comp)) throw invalidParameter(`vector ${v.name} component`, 'the name of a field in the set', comp);
    }
  }
  return { cols, rows };
}

/**
 * A units string as an identifier suffix: `kg/m^3` → `kgm3`, `px` → `px`, `1` or `` → ``.
 * Used for CSV column and VTK array names (e.g. `rho_kgm3`).
 */
export function unitSlug(units: string): string {
  const u = units.trim();
  if (u === '' || u === '1' || u === '-') return '';
  return u.replace(/[^A-Za-z0-9]/g, '');
}

/** Field name with its unit slug: `rho` + `kg/m^3` → `rho_kgm3`; dimensionless → `name`. */
export function columnName(name: string, units: string): string {
  const s = unitSlug(units);
  return s ? `${name}_${s}` : name;
}

/** Default colour-map kind of a field: diverging when it has both signs, else sequential. */
export function defaultColormap(f: FieldSetField): 'sequential' | 'diverging' | 'cyclic' {
  if (f.colormap) return f.colormap;
  let neg = false;
  let pos = false;
  for (const v of f.data.data) {
    if (v < 0) neg = true;
    else if (v > 0) pos = true;
  }
  return neg && pos ? 'diverging' : 'sequential';
}
