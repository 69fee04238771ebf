/**
 * HDF5 output of a field set through h5wasm (HDF5 compiled to WebAssembly, writing to the host
 * file system). Layout:
 *
 * ```
 * /                      attrs: title, software, settings (JSON string), every `attributes` entry
 * /grid/x_px, y_px       float64 [cols], [rows]; attr units = "px" (y down)
 * /grid/x_m,  y_m        float64, attr units = "m" (when the grid has metres)
 * /fields/<name>         float32 [rows, cols] (row-major, row 0 = top image row), gzip level 4;
 *                        attrs units, description; NaN = no data
 * /categories/<name>     uint8 [rows, cols]; attrs description, names (string array: names[code])
 * /fields attrs          vector_<name> = "<x field>,<y field>,<frame>" (frame image = y down, y-up)
 * ```
 */
import { existsSync } from 'node:fs';
import { RhofieldError } from '../util/errors.js';
import { loadH5wasm } from '../util/optionalModules.js';
import { VERSION } from '../util/version.js';
import { validateFieldSet, type FieldSet } from './fieldSet.js';

/**
 * Write a field set as an HDF5 file (layout in the module comment).
 * @param path output `.h5` file (replaced if it exists: callers check for overwriting).
 * @throws RhofieldError (usage) for an invalid set; (processing) if HDF5 reports an error.
 */
export async function writeHdf5(path: string, set: FieldSet): Promise<void> {
  const { cols, rows } = validateFieldSet(set);
  const h5wasm = await loadH5wasm();
  const f = new h5wasm.File(path, 'w');
  try {
    if (set.title) f.create_attribute('title', set.title);
    f.create_attribute('software', `rhofield ${VERSION}`);
    if (set.settings !== undefined) f.create_attribute('settings', JSON.stringify(set.settings));
    for (const [k, v] of Object.entries(set.attributes ?? {})) {
      f.create_attribute(k, typeof v === 'boolean' ? String(v) : v);
    }
    const g = f.create_group('grid');
    const coord = (name: string, data: Float64Array, units: string) => {
      const ds = g.create_dataset({ name, data, shape: [data.length], dtype: '<d' });
      ds.create_attribute('units', units);
    };
    coord('x_px', set.grid.xPx, 'px');
    coord('y_px', set.grid.yPx, 'px');
    if (set.grid.xM) coord('x_m', set.grid.xM, 'm');
    if (set.grid.yM) coord('y_m', set.grid.yM, 'm');
    const fg = f.create_group('fields');
    const chunks = [Math.min(rows, 64), Math.min(cols, 64)];
    for (const fld of set.fields) {
      const ds = fg.create_dataset({ name: fld.name, data: fld.data.data, shape: [rows, cols], dtype: '<f', chunks, compression: 'gzip', compression_opts: 4 });
      ds.create_attribute('units', fld.units);
      ds.create_attribute('description', fld.description);
    }
    for (const v of set.vectors ?? []) fg.create_attribute(`vector_${v.name}`, `${v.x},${v.y},${v.frame ?? 'image'}`);
    if (set.categories?.length) {
      const cg = f.create_group('categories');
      for (const c of set.categories) {
        const ds = cg.create_dataset({ name: c.name, data: c.codes, shape: [rows, cols], dtype: '<B' });
        ds.create_attribute('description', c.description);
        ds.create_attribute('names', Array.from(c.names));
      }
    }
  } catch (e) {
    throw new RhofieldError('processing', `HDF5 writing ${path} failed: ${(e as Error).message ?? e}`);
  } finally {
    f.close();
  }
  if (!existsSync(path)) throw new RhofieldError('processing', `HDF5 writing ${path} failed: no file was created`);
}
