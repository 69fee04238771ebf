/**
 * Batch statistics on disk: accumulate the per-pair results of a run (or a shard) in frame order,
 * write mean / standard deviation / valid-count fields, write and merge shards' partial accumulators.
 *
 * Quantities: displacement (x and y components, from displacement.npy rows×cols×2) and, when the
 * pairs carry it, density (density.npy rows×cols). A displacement vector counts as valid where both
 * components are finite. All accumulation is float64 (Welford / Chan, see @rhofield/core batch).
 */
import { existsSync, promises as fsp } from 'node:fs';
import path from 'node:path';
import {
  RhofieldError,
  addSample,
  combineStatistics,
  createRunningStatistics,
  decodeNpy,
  encodeNpy,
  finalizeStatistics,
  inputError,
  parseFormats,
  writeFieldSet,
  type FieldSet,
  type FieldSetField,
  type FieldSetGrid,
  type RunningStatistics,
} from '@rhofield/core';
import { layout } from './folders.js';
import { installFolder, recordFolder, type BatchCommand, type Warn } from './owned.js';

/** Accumulators of one run or shard. */
export interface BatchAccumulators {
  rows: number;
  cols: number;
  dx: RunningStatistics;
  dy: RunningStatistics;
  density: RunningStatistics | null;
  /** Frame ids included, in frame order. */
  pairIds: string[];
}

async function readNpy(file: string) {
  return decodeNpy(new Uint8Array(await fsp.readFile(file)), file);
}

/**
 * Accumulate the finished pairs among `ids` (frame order) from DIR/pairs (with `settingsHash`: only
 * those whose pair.json names these settings).
 * @returns the accumulators, and the ids skipped because their grid differs from the first pair's.
 */
export async function accumulatePairs(dir: string, ids: readonly string[], settingsHash?: string): Promise<{ acc: BatchAccumulators | null; mismatched: Array<{ id: string; error: string }> }> {
  let acc: BatchAccumulators | null = null;
  const mismatched: Array<{ id: string; error: string }> = [];
  for (const id of ids) {
    const pdir = layout.pair(dir, id);
    if (!existsSync(layout.pairRecord(dir, id))) continue;
    if (settingsHash !== undefined && !(await pairFinished(dir, id, settingsHash))) continue;
    const disp = await readNpy(path.join(pdir, 'displacement.npy'));
    const [rows, cols, comps] = disp.shape;
    if (disp.shape.length !== 3 || comps !== 2 || rows === undefined || cols === undefined) {
      throw inputError(`${path.join(pdir, 'displacement.npy')}: expected shape (rows, cols, 2) but received (${disp.shape.join(', ')})`);
    }
    const densFile = path.join(pdir, 'density.npy');
    const dens = existsSync(densFile) ? await readNpy(densFile) : null;
    if (!acc) {
      const n = rows * cols;
      acc = { rows, cols, dx: createRunningStatistics(n), dy: createRunningStatistics(n), density: dens ? createRunningStatistics(n) : null, pairIds: [] };
    } else if (rows !== acc.rows || cols !== acc.cols) {
      mismatched.push({ id, error: `vector grid ${rows}×${cols} differs from the run's ${acc.rows}×${acc.cols}; frames must all have one size` });
      continue;
    }
    if ((dens !== null) !== (acc.density !== null) || (dens && dens.data.length !== rows * cols)) {
      mismatched.push({ id, error: 'density field missing or of another size than in the other pairs' });
      continue;
    }
    const n = rows * cols;
    const dx = new Float64Array(n);
    const dy = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const x = disp.data[2 * i] as number;
      const y = disp.data[2 * i + 1] as number;
      const ok = Number.isFinite(x) && Number.isFinite(y);
      dx[i] = ok ? x : NaN;
      dy[i] = ok ? y : NaN;
    }
    addSample(acc.dx, dx);
    addSample(acc.dy, dy);
    if (acc.density && dens) addSample(acc.density, dens.data);
    acc.pairIds.push(id);
  }
  return { acc, mismatched };
}

/**
 * True if pairs/<id> is a finished pair of these settings: its pair.json names them (a pair.json of
 * other settings stays where --force could not remove it: a file of the user's, or a damaged list).
 */
export async function pairFinished(dir: string, id: string, settingsHash: string): Promise<boolean> {
  try {
    const rec = JSON.parse(await fsp.readFile(layout.pairRecord(dir, id), 'utf8')) as { settingsHash?: unknown } | null;
    return !!rec && rec.settingsHash === settingsHash;
  } catch {
    return false;
  }
}

function interleave(a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(a.length * 2);
  for (let i = 0; i < a.length; i++) {
    out[2 * i] = a[i] as number;
    out[2 * i + 1] = b[i] as number;
  }
  return out;
}

/** Summary written to statistics/statistics.json. */
export interface StatisticsInfo {
  readonly settingsHash: string;
  readonly jobsHash: string;
  readonly pairsTotal: number;
  readonly pairsUsed: number;
  readonly shards?: number;
  readonly failed: string[];
}

/** Grid coordinates of the run, from the first pair's displacement_x_px/y_px(/x_m/y_m).npy; indices if absent. */
async function readGrid(dir: string, firstId: string | undefined, rows: number, cols: number): Promise<{ grid: FieldSetGrid; fromPairs: boolean }> {
  const pdir = firstId !== undefined ? layout.pair(dir, firstId) : '';
  const vec = async (name: string, n: number): Promise<Float64Array | undefined> => {
    const f = path.join(pdir, `displacement_${name}.npy`);
    if (!pdir || !existsSync(f)) return undefined;
    const a = await readNpy(f);
    return a.data.length === n ? Float64Array.from(a.data) : undefined;
  };
  const [xPx, yPx, xM, yM] = await Promise.all([vec('x_px', cols), vec('y_px', rows), vec('x_m', cols), vec('y_m', rows)]);
  if (!xPx || !yPx) {
    return { grid: { xPx: Float64Array.from({ length: cols }, (_, i) => i), yPx: Float64Array.from({ length: rows }, (_, i) => i) }, fromPairs: false };
  }
  return { grid: { xPx, yPx, ...(xM && yM ? { xM, yM } : {}) }, fromPairs: true };
}

/** The statistics as a field set (float32 copies, for the h5/vti/mat/csv/png/svg writers). */
function statisticsFieldSet(acc: BatchAccumulators, grid: FieldSetGrid, info: StatisticsInfo): FieldSet {
  const { rows, cols } = acc;
  const field = (name: string, units: string, description: string, values: ArrayLike<number>, colormap?: FieldSetField['colormap']): FieldSetField => ({
    name,
    units,
    description,
    data: { width: cols, height: rows, data: Float32Array.from(values as ArrayLike<number>) },
    ...(colormap ? { colormap } : {}),
  });
  const fx = finalizeStatistics(acc.dx);
  const fy = finalizeStatistics(acc.dy);
  const fields: FieldSetField[] = [
    field('dx_mean', 'px', 'mean displacement x (right)', fx.mean),
    field('dy_mean', 'px', 'mean displacement y (down)', fy.mean),
    field('dx_std', 'px', 'standard deviation of displacement x', fx.std, 'sequential'),
    field('dy_std', 'px', 'standard deviation of displacement y', fy.std, 'sequential'),
    field('displacement_count', '1', 'number of pairs with a valid vector', fx.count, 'sequential'),
  ];
  if (acc.density) {
    const fd = finalizeStatistics(acc.density);
    fields.push(
      field('rho_mean', 'kg/m^3', 'mean density', fd.mean, 'sequential'),
      field('rho_std', 'kg/m^3', 'standard deviation of density', fd.std, 'sequential'),
      field('density_count', '1', 'number of pairs with a density value', fd.count, 'sequential'),
    );
  }
  return {
    grid,
    fields,
    vectors: [{ name: 'displacement_mean', x: 'dx_mean', y: 'dy_mean', frame: 'image' }],
    title: 'batch statistics',
    attributes: { pairsUsed: info.pairsUsed, pairsTotal: info.pairsTotal, settingsHash: info.settingsHash },
  };
}

/**
 * Write DIR/statistics (replacing the files of the previous one; files rhofield did not write there
 * stay, see owned.ts): displacement_mean/std (rows×cols×2,
 * float64), displacement_count (rows×cols, uint32), density_mean/std/count likewise, the grid
 * (statistics_x_px/y_px[/x_m/y_m].npy, float64, when the pairs have them), statistics.json,
 * and the same fields in the run's other formats (`formats` minus npy: statistics.h5/.csv/.vti/.mat,
 * statistics_<field>.png/.svg; float32 there, the .npy files are the float64 originals).
 * The standard deviation is the sample one (n − 1); NaN where fewer than 2 valid samples.
 */
export async function writeStatistics(dir: string, acc: BatchAccumulators, info: StatisticsInfo, formats: readonly string[] = ['npy'], command: BatchCommand = 'batch', warn: Warn = () => {}): Promise<string[]> {
  const target = layout.statistics(dir);
  const stage = `${target}.partial-${process.pid}-${Date.now()}`;
  await fsp.mkdir(stage, { recursive: true });
  try {
    const { rows, cols } = acc;
    const fx = finalizeStatistics(acc.dx);
    const fy = finalizeStatistics(acc.dy);
    const files: Record<string, Uint8Array> = {
      'displacement_mean.npy': encodeNpy(interleave(fx.mean, fy.mean), [rows, cols, 2]),
      'displacement_std.npy': encodeNpy(interleave(fx.std, fy.std), [rows, cols, 2]),
      'displacement_count.npy': encodeNpy(fx.count, [rows, cols]),
    };
    if (acc.density) {
      const fd = finalizeStatistics(acc.density);
      files['density_mean.npy'] = encodeNpy(fd.mean, [rows, cols]);
      files['density_std.npy'] = encodeNpy(fd.std, [rows, cols]);
      files['density_count.npy'] = encodeNpy(fd.count, [rows, cols]);
    }
    const { grid, fromPairs } = await readGrid(dir, acc.pairIds[0], rows, cols);
    if (fromPairs) {
      files['statistics_x_px.npy'] = encodeNpy(grid.xPx, [cols]);
      files['statistics_y_px.npy'] = encodeNpy(grid.yPx, [rows]);
      if (grid.xM && grid.yM) {
        files['statistics_x_m.npy'] = encodeNpy(grid.xM, [cols]);
        files['statistics_y_m.npy'] = encodeNpy(grid.yM, [rows]);
      }
    }
    for (const [name, bytes] of Object.entries(files)) await fsp.writeFile(path.join(stage, name), bytes);
    const written = Object.keys(files);
    const others = parseFormats(formats.join(',')).filter((f) => f !== 'npy');
    if (others.length) {
      const out = await writeFieldSet(stage, 'statistics', statisticsFieldSet(acc, grid, info), others, { figure: { vectors: 'displacement_mean' } });
      for (const f of out) written.push(path.basename(f.path));
    }
    const meta = {
      ...info,
      grid: { rows, cols, coordinates: fromPairs ? `from pairs/${acc.pairIds[0]}` : 'row/column indices (no grid files in the pairs)' },
      pairIds: acc.pairIds,
      definitions: {
        mean: 'per-point mean over the pairs with a finite value there (float64, frame order)',
        std: 'per-point sample standard deviation (denominator count - 1); NaN where count < 2',
        count: 'per-point number of pairs with a valid value (displacement: both components finite)',
        displacement: 'measured minus reference, +x right, +y down, pixels; last axis = (x, y)',
        files: '*.npy here are float64 (counts uint32); statistics.* in other formats hold float32 copies',
      },
    };
    await fsp.writeFile(path.join(stage, 'statistics.json'), JSON.stringify(meta, null, 2) + '\n');
    await recordFolder(stage, command);
    await installFolder(stage, target, { marker: 'statistics.json', warn });
    return written.concat('statistics.json');
  } catch (e) {
    await fsp.rm(stage, { recursive: true, force: true });
    throw e;
  }
}

/** What a shard's partial.json records. */
export interface PartialInfo {
  readonly shard: { index: number; count: number };
  readonly settingsHash: string;
  readonly jobsHash: string;
  readonly pairsTotal: number;
  readonly rows: number;
  readonly cols: number;
  readonly hasDensity: boolean;
  readonly pairIds: string[];
  readonly failed: string[];
}

function packAcc(s: RunningStatistics, rows: number, cols: number): Uint8Array {
  const out = new Float64Array(3 * s.length);
  out.set(s.count, 0);
  out.set(s.mean, s.length);
  out.set(s.m2, 2 * s.length);
  return encodeNpy(out, [3, rows, cols]);
}

function unpackAcc(data: Float64Array, n: number): RunningStatistics {
  return { length: n, count: data.slice(0, n), mean: data.slice(n, 2 * n), m2: data.slice(2 * n, 3 * n) };
}

/**
 * Write a shard's partial accumulators to DIR/shards/<K>-of-<N>/ (count, mean, M2 stacked as a
 * 3×rows×cols float64 array per quantity), replacing the files of any previous partial of that shard.
 */
export async function writePartial(dir: string, acc: BatchAccumulators | null, info: Omit<PartialInfo, 'rows' | 'cols' | 'hasDensity' | 'pairIds'>, warn: Warn = () => {}): Promise<void> {
  const target = layout.shard(dir, info.shard.index, info.shard.count);
  await fsp.mkdir(layout.shards(dir), { recursive: true });
  const stage = `${target}.partial-${process.pid}-${Date.now()}`;
  await fsp.mkdir(stage);
  try {
    if (acc) {
      await fsp.writeFile(path.join(stage, 'dx_acc.npy'), packAcc(acc.dx, acc.rows, acc.cols));
      await fsp.writeFile(path.join(stage, 'dy_acc.npy'), packAcc(acc.dy, acc.rows, acc.cols));
      if (acc.density) await fsp.writeFile(path.join(stage, 'density_acc.npy'), packAcc(acc.density, acc.rows, acc.cols));
    }
    const full: PartialInfo = { ...info, rows: acc?.rows ?? 0, cols: acc?.cols ?? 0, hasDensity: !!acc?.density, pairIds: acc?.pairIds ?? [] };
    await fsp.writeFile(path.join(stage, 'partial.json'), JSON.stringify(full, null, 2) + '\n');
    await recordFolder(stage, 'batch');
    await installFolder(stage, target, { marker: 'partial.json', warn });
  } catch (e) {
    await fsp.rm(stage, { recursive: true, force: true });
    throw e;
  }
}

/** Read and check a shard's partial.json: every field present with its type, else an input error naming the file. */
async function readPartialInfo(f: string, k: number, n: number): Promise<PartialInfo> {
  const redo = `rerun shard ${k}/${n} (--shard ${k}/${n}), then merge`;
  let v: unknown;
  try {
    v = JSON.parse(await fsp.readFile(f, 'utf8'));
  } catch {
    throw inputError(`${f} is not valid JSON (damaged or cut short); ${redo}`);
  }
  const o = v as Record<string, unknown> | null;
  const isInt = (x: unknown) => typeof x === 'number' && Number.isInteger(x) && x >= 0;
  const strings = (x: unknown) => Array.isArray(x) && x.every((e) => typeof e === 'string');
  const shard = o && typeof o === 'object' ? (o['shard'] as Record<string, unknown> | null) : null;
  const bad =
    !o || typeof o !== 'object' ? 'not an object'
    : !shard || typeof shard !== 'object' || shard['index'] !== k || shard['count'] !== n ? `shard is not {index: ${k}, count: ${n}}`
    : typeof o['settingsHash'] !== 'string' ? 'settingsHash is missing'
    : typeof o['jobsHash'] !== 'string' ? 'jobsHash is missing'
    : !isInt(o['pairsTotal']) || !isInt(o['rows']) || !isInt(o['cols']) ? 'pairsTotal, rows or cols is not a count'
    : typeof o['hasDensity'] !== 'boolean' ? 'hasDensity is missing'
    : !strings(o['pairIds']) || !strings(o['failed']) ? 'pairIds or failed is not a list of names'
    : (o['pairIds'] as string[]).length > 0 && ((o['rows'] as number) < 1 || (o['cols'] as number) < 1) ? 'the grid is empty'
    : null;
  if (bad) throw inputError(`${f} is damaged (${bad}); ${redo}`);
  return o as unknown as PartialInfo;
}

/**
 * Combine the partial statistics of all shards of DIR in shard order (= frame order).
 * @throws RhofieldError (input) if there are no shards, shards of different N, a missing shard, or
 *   shards made with other settings or another frame list.
 */
export async function mergePartials(dir: string, settingsHash: string): Promise<{ acc: BatchAccumulators | null; infos: PartialInfo[] }> {
  const sdir = layout.shards(dir);
  const names = existsSync(sdir) ? (await fsp.readdir(sdir)).filter((n) => /^\d+-of-\d+$/.test(n)) : [];
  if (names.length === 0) throw inputError(`${dir} has no shard results (shards/K-of-N); run the job array first, or run without --shard`);
  const counts = new Set(names.map((n) => Number(n.split('-of-')[1])));
  if (counts.size > 1) throw inputError(`${sdir} holds shards of different splits (${Array.from(counts, (c) => `N=${c}`).join(', ')}); rerun the batch with --force and one split`);
  const n = Array.from(counts)[0] as number;
  const infos: PartialInfo[] = [];
  const missing: number[] = [];
  for (let k = 1; k <= n; k++) {
    const f = path.join(layout.shard(dir, k, n), 'partial.json');
    if (!existsSync(f)) {
      missing.push(k);
      continue;
    }
    infos.push(await readPartialInfo(f, k, n));
  }
  if (missing.length) throw inputError(`shard(s) ${missing.map((k) => `${k}/${n}`).join(', ')} of ${dir} have not finished; rerun those tasks (--shard K/${n}), then merge`);
  for (const p of infos) {
    if (p.settingsHash !== settingsHash) throw inputError(`shard ${p.shard.index}/${n} of ${dir} was made with other settings than run.json; rerun the batch with --force`);
    if (p.jobsHash !== infos[0]!.jobsHash) throw inputError(`shards 1/${n} and ${p.shard.index}/${n} of ${dir} cover different frame lists; rerun all shards with the same --frames/--range`);
  }
  let acc: BatchAccumulators | null = null;
  for (const p of infos) {
    if (p.pairIds.length === 0) continue;
    const sd = layout.shard(dir, p.shard.index, n);
    const len = p.rows * p.cols;
    const read = async (q: string) => {
      const f = path.join(sd, `${q}_acc.npy`);
      let a: Awaited<ReturnType<typeof readNpy>>;
      try {
        a = await readNpy(f);
      } catch (e) {
        throw inputError(`${f} is missing or damaged (${(e as NodeJS.ErrnoException).code === 'ENOENT' ? 'no such file' : 'not a readable .npy array'}); rerun shard ${p.shard.index}/${n} (--shard ${p.shard.index}/${n}), then merge`);
      }
      if (!(a.data instanceof Float64Array) || a.data.length !== 3 * len) {
        throw inputError(`${f} holds ${a.data.length} values, expected ${3 * len} (3×${p.rows}×${p.cols}); rerun shard ${p.shard.index}/${n}, then merge`);
      }
      return unpackAcc(a.data, len);
    };
    const part: BatchAccumulators = { rows: p.rows, cols: p.cols, dx: await read('dx'), dy: await read('dy'), density: p.hasDensity ? await read('density') : null, pairIds: p.pairIds };
    if (!acc) {
      acc = part;
      continue;
    }
    if (part.rows !== acc.rows || part.cols !== acc.cols || !!part.density !== !!acc.density) {
      throw new RhofieldError('input', `shard ${p.shard.index}/${n} has a ${part.rows}×${part.cols} grid but earlier shards ${acc.rows}×${acc.cols}; frames must all have one size`);
    }
    acc = {
      rows: acc.rows,
      cols: acc.cols,
      dx: combineStatistics(acc.dx, part.dx),
      dy: combineStatistics(acc.dy, part.dy),
      density: acc.density && part.density ? combineStatistics(acc.density, part.density) : null,
      pairIds: acc.pairIds.concat(part.pairIds),
    };
  }
  return { acc, infos };
}
