/**
 * Write a field set in any subset of formats, chosen by tokens `npy,h5,vti,mat,csv,png,svg`.
 *
 * Files (in `dir`, all starting with `baseName`):
 * - npy: `<base>_<field>.npy` float32 (rows, cols); `<base>_<vector>.npy` float32 (rows, cols, 2)
 *   with [..., 0] = x and [..., 1] = y component (in the vector's own frame, see FieldSetVector); `<base>_<category>.npy` int32 codes;
 *   `<base>_x_px.npy`, `<base>_y_px.npy` (and `_x_m`, `_y_m`) float64 1-D;
 * - csv `<base>.csv`, h5 `<base>.h5`, vti `<base>.vti`, mat `<base>.mat` (one file each);
 * - png/svg: `<base>_<field>.png|svg`, one figure per field (fields with `figure: false` skipped),
 *   axes in mm when the grid has metres (else px), colour map per field ({@link defaultColormap}).
 * Existing files are never replaced unless `overwrite` is set: all names are checked first, so
 * nothing is written when one exists.
 */
import { existsSync } from 'node:fs';
import { mkdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { inputError, invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';
import { defaultColormap, validateFieldSet, type FieldSet } from './fieldSet.js';
import { renderFieldFigure, type FigureVectors } from './renderFieldFigure.js';
import { fieldSetToCsv } from './writeCsv.js';
import { writeHdf5 } from './writeHdf5.js';
import { fieldSetToMat } from './writeMat.js';
import { fieldToNpy, vectorToNpy } from './writeNpy.js';
import { fieldSetToVti } from './writeVti.js';

function negate(f: Field): Field {
  return { width: f.width, height: f.height, data: Float32Array.from(f.data, (v) => -v) };
}

/** Output format tokens. */
export const FIELD_SET_FORMATS = ['npy', 'h5', 'vti', 'mat', 'csv', 'png', 'svg'] as const;
export type FieldSetFormat = (typeof FIELD_SET_FORMATS)[number];

/**
 * Parse a comma-separated format list such as `"npy,h5,png"` (case-insensitive, duplicates merged).
 * @throws RhofieldError (usage) naming an unknown token and listing the allowed ones.
 */
export function parseFormats(list: string): FieldSetFormat[] {
  const out: FieldSetFormat[] = [];
  for (const raw of list.split(',')) {
    const t = raw.trim().toLowerCase();
    if (!t) continue;
    const tok = t === 'hdf5' ? 'h5' : t;
    if (!(FIELD_SET_FORMATS as readonly string[]).includes(tok)) {
      throw invalidParameter('format', `one of ${FIELD_SET_FORMATS.join(', ')}`, raw.trim());
    }
    if (!out.includes(tok as FieldSetFormat)) out.push(tok as FieldSetFormat);
  }
  if (!out.length) throw invalidParameter('format list', `at least one of ${FIELD_SET_FORMATS.join(', ')}`, list);
  return out;
}

/** Options of {@link writeFieldSet}. */
export interface WriteFieldSetOptions {
  /** Replace existing files (default false: an existing file is an input error). */
  readonly overwrite?: boolean;
  /** Figure options for png/svg. */
  readonly figure?: {
    /** Name of a vector of the set to overlay on every figure. */
    readonly vectors?: string;
    /** Overlay every n-th vector (default auto). */
    readonly every?: number;
    readonly widthPx?: number;
    readonly widthMm?: number;
    readonly dpi?: number;
  };
}

/** One written file. */
export interface WrittenFile {
  readonly format: FieldSetFormat;
  readonly path: string;
}

/**
 * Write a field set in the given formats.
 * @param dir output folder (created if missing).
 * @param baseName file-name stem, e.g. `displacement` or `density`.
 * @param set the result ({@link FieldSet}).
 * @param formats tokens (see {@link parseFormats}).
 * @returns the files written, in order.
 * @throws RhofieldError (input) when a target file exists and `overwrite` is not set; (usage) for
 *   an invalid set or format.
 */
export async function writeFieldSet(
  dir: string,
  baseName: string,
  set: FieldSet,
  formats: readonly FieldSetFormat[],
  options: WriteFieldSetOptions = {},
): Promise<WrittenFile[]> {
  validateFieldSet(set);
  if (!/^[A-Za-z0-9][A-Za-z0-9_.-]*$/.test(baseName)) throw invalidParameter('baseName', 'a file-name stem of letters, digits, _ . -', baseName);
  for (const f of formats) if (!(FIELD_SET_FORMATS as readonly string[]).includes(f)) throw invalidParameter('format', `one of ${FIELD_SET_FORMATS.join(', ')}`, f);
  const g = set.grid;
  const jobs: { format: FieldSetFormat; path: string; make: () => Promise<Uint8Array | string | null> }[] = [];
  const p = (name: string) => join(dir, name);
  const figFields = set.fields.filter((f) => f.figure !== false);
  const fo = options.figure ?? {};
  const vecSpec = fo.vectors ? set.vectors?.find((v) => v.name === fo.vectors) : undefined;
  if (fo.vectors && !vecSpec) throw invalidParameter('figure.vectors', `a vector of the set (${(set.vectors ?? []).map((v) => v.name).join(', ') || 'none'})`, fo.vectors);
  const metres = !!(g.xM && g.yM);
  const figure = (fi: (typeof set.fields)[number]) => {
    const byName = (n: string) => set.fields.find((f) => f.name === n)!.data;
    const vectors: FigureVectors | undefined = vecSpec
      ? {
          u: byName(vecSpec.x),
          v: vecSpec.frame === 'y-up' ? negate(byName(vecSpec.y)) : byName(vecSpec.y),
          units: set.fields.find((f) => f.name === vecSpec.x)!.units,
          ...(fo.every ? { every: fo.every } : {}),
        }
      : undefined;
    return renderFieldFigure(fi.data, {
      xMm: metres ? Float64Array.from(g.xM!, (v) => v * 1000) : g.xPx,
      yMm: metres ? Float64Array.from(g.yM!, (v) => v * 1000) : g.yPx,
      axisUnit: metres ? 'mm' : 'px',
      title: set.title ? `${set.title}: ${fi.name}` : fi.name,
      quantity: fi.quantity ?? fi.description,
      unit: fi.units,
      colormap: defaultColormap(fi),
      ...(vectors ? { vectors } : {}),
      ...(fo.widthPx ? { widthPx: fo.widthPx } : {}),
      ...(fo.widthMm ? { widthMm: fo.widthMm } : {}),
      ...(fo.dpi ? { dpi: fo.dpi } : {}),
    });
  };
  for (const format of formats) {
    switch (format) {
      case 'npy':
        for (const f of set.fields) jobs.push({ format, path: p(`${baseName}_${f.name}.npy`), make: async () => fieldToNpy(f.data) });
        for (const v of set.vectors ?? []) {
          const fx = set.fields.find((f) => f.name === v.x)!.data;
          const fy = set.fields.find((f) => f.name === v.y)!.data;
          jobs.push({ format, path: p(`${baseName}_${v.name}.npy`), make: async () => fieldToNpy([fx, fy]) });
        }
        for (const c of set.categories ?? []) jobs.push({ format, path: p(`${baseName}_${c.name}.npy`), make: async () => fieldToNpy({ width: g.xPx.length, height: g.yPx.length, data: Float32Array.from(c.codes) }) });
        jobs.push({ format, path: p(`${baseName}_x_px.npy`), make: async () => vectorToNpy(g.xPx) });
        jobs.push({ format, path: p(`${baseName}_y_px.npy`), make: async () => vectorToNpy(g.yPx) });
        if (g.xM) jobs.push({ format, path: p(`${baseName}_x_m.npy`), make: async () => vectorToNpy(g.xM!) });
        if (g.yM) jobs.push({ format, path: p(`${baseName}_y_m.npy`), make: async () => vectorToNpy(g.yM!) });
        break;
      case 'csv':
        jobs.push({ format, path: p(`${baseName}.csv`), make: async () => fieldSetToCsv(set) });
        break;
      case 'h5': {
        const path = p(`${baseName}.h5`);
        jobs.push({ format, path, make: async () => (await writeHdf5(path, set), null) });
        break;
      }
      case 'vti':
        jobs.push({ format, path: p(`${baseName}.vti`), make: async () => fieldSetToVti(set) });
        break;
      case 'mat':
        jobs.push({ format, path: p(`${baseName}.mat`), make: async () => fieldSetToMat(set) });
        break;
      case 'svg':
        for (const f of figFields) jobs.push({ format, path: p(`${baseName}_${f.name}.svg`), make: async () => figure(f).svg });
        break;
      case 'png':
        for (const f of figFields) jobs.push({ format, path: p(`${baseName}_${f.name}.png`), make: async () => figure(f).png() });
        break;
    }
  }
  if (!options.overwrite) {
    const taken = jobs.find((j) => existsSync(j.path));
    if (taken) throw inputError(`${taken.path} already exists; choose another output folder or allow overwriting (--force)`);
  }
  await mkdir(dir, { recursive: true });
  // All files at once: figures first, so that librsvg and the PNG encoder work on the thread pool
  // while the CSV and the other formats are built here; every job settles before an error is thrown.
  const figuresFirst = jobs.filter((j) => j.format === 'png' || j.format === 'svg').concat(jobs.filter((j) => j.format !== 'png' && j.format !== 'svg'));
  const settled = await Promise.allSettled(
    figuresFirst.map(async (j) => {
      const content = await j.make();
      if (content !== null) await writeFile(j.path, content);
    }),
  );
  const failed = settled.find((r): r is PromiseRejectedResult => r.status === 'rejected');
  if (failed) throw failed.reason;
  return jobs.map((j) => ({ format: j.format, path: j.path }));
}
