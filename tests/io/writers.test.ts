import { mkdtempSync, readFileSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  fieldSetToCsv,
  fieldToNpy,
  formatFloat32,
  parseFormats,
  RhofieldError,
  writeFieldSet,
  type FieldSet,
} from '@rhofield/core';
import { IN_CI, PY_PRELUDE, pythonHas, runPython, skipWithoutPython } from './python.js';
import { COLS, ROWS, dx, dy, mismatch, rho, sampleSet, status, T, xM, xPx, yM, yPx } from './sampleSet.js';

const dir = mkdtempSync(path.join(tmpdir(), 'rf-io-'));
const skipNumpy = skipWithoutPython(['numpy']);
const skipH5 = skipWithoutPython(['numpy', 'h5py']);
const skipScipy = skipWithoutPython(['numpy', 'scipy']);

describe('independent python readers', () => {
  it.runIf(IN_CI)('are installed on CI (/usr/bin/python3 with numpy, h5py, scipy)', () => {
    expect(pythonHas(['numpy', 'h5py', 'scipy'])).toBe(true);
  });
});

describe('formatFloat32(v): shortest decimal that reads back to the same float32', () => {
  it('round-trips awkward values and writes NaN as an empty cell', () => {
    const vals = Float32Array.of(1 / 3, 0.1, 1e-38, 3.4e38, -2.5e-7, 123456.789, 1, 0, -0);
    for (const v of vals) {
      const s = formatFloat32(v);
      expect(Math.fround(Number(s)), s).toBe(v === 0 ? 0 : v);
      expect(s.replace(/^-/, '').replace('.', '').replace(/e.*$/, '').replace(/^0+/, '').length, s).toBeLessThanOrEqual(9);
    }
    expect(formatFloat32(0.1)).toBe('0.1'); // shortest, not 0.100000001
    expect(formatFloat32(NaN)).toBe('');
  });
  it('equals its definition (first p = 1…8 whose toPrecision(p) rounds back, else 9; ECMA-262 Number.prototype.toPrecision) on random float32 and on decade edges and ties', () => {
    const byDefinition = (v: number): string => {
      for (let p = 1; p < 9; p++) {
        const s = v.toPrecision(p);
        if (Math.fround(Number(s)) === v) return String(Number(s));
      }
      return String(Number(v.toPrecision(9)));
    };
    const bits = new Uint32Array(1);
    const f = new Float32Array(bits.buffer);
    let seed = 12345;
    const next = () => (seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0);
    const vals: number[] = [];
    for (let i = 0; i < 200000; i++) {
      // exponents spread over the whole float32 range, and densely over 1e-6 … 1e16
      bits[0] = i % 2 ? next() : (next() & 0x807fffff) | ((100 + (next() % 60)) << 23);
      vals.push(f[0]!);
    }
    for (let e = -8; e <= 16; e++) for (const m of [1, 0.5, 2.5, 9.5, 9.999999, 1.0000001, 0.99999994]) vals.push(Math.fround(m * 10 ** e), Math.fround(-m * 10 ** e));
    for (let i = 0; i < 5000; i++) vals.push(Math.fround((i + 0.5) / 1024), Math.fround(i / 8 + 0.0625), Math.fround(-i * 0.25));
    let bad = '';
    for (const v of vals) {
      if (Number.isNaN(v) || !Number.isFinite(v)) continue;
      const want = v === 0 ? '0' : byDefinition(v);
      if (formatFloat32(v) !== want && !bad) bad = `${v}: ${formatFloat32(v)} vs ${want}`;
    }
    expect(bad).toBe('');
  });
});

describe.skipIf(skipNumpy)('.npy read back with numpy', () => {
  it('scalar (rows, cols) float32 with NaN, vector (rows, cols, 2), coordinates float64', () => {
    const p1 = path.join(dir, 'rho.npy');
    const p2 = path.join(dir, 'disp.npy');
    writeFileSync(p1, fieldToNpy(rho));
    writeFileSync(p2, fieldToNpy([dx, dy]));
    const r = runPython<{ s1: number[]; d1: string; a: (number | null)[]; s2: number[]; u: number[]; v: number[] }>(
      PY_PRELUDE +
        `a = np.load(sys.argv[1]); b = np.load(sys.argv[2])
out({'s1': a.shape, 'd1': str(a.dtype), 'a': a.ravel(), 's2': b.shape, 'u': b[..., 0].ravel(), 'v': b[..., 1].ravel()})`,
      [p1, p2],
    );
    expect(r.s1).toEqual([ROWS, COLS]);
    expect(r.d1).toBe('float32');
    expect(mismatch(rho.data, r.a)).toBe('');
    expect(r.s2).toEqual([ROWS, COLS, 2]);
    expect(mismatch(dx.data, r.u)).toBe('');
    expect(mismatch(dy.data, r.v)).toBe('');
  });
});

describe('CSV', () => {
  const csv = fieldSetToCsv(sampleSet);
  const lines = csv.trimEnd().split('\n');
  it('header: coordinates, fields with unit slugs, category word column', () => {
    expect(lines[0]).toBe('x_px,y_px,x_m,y_m,rho_kgm3,T_K,dx_px,dy_px,status');
    expect(lines).toHaveLength(1 + COLS * ROWS);
  });
  it('rows in grid order; NaN empty; status as word; values round-trip float32', () => {
    const cells = lines[1 + 5 + 1 * COLS]!.split(',');
    expect(Number(cells[0])).toBe(xPx[5]);
    expect(Number(cells[1])).toBe(yPx[1]);
    expect(cells[4]).toBe(''); // rho NaN at (5, 1)
    expect(cells[8]).toBe('masked');
    for (let i = 0; i < COLS * ROWS; i++) {
      const c = lines[1 + i]!.split(',');
      expect(Number(c[2]), `x_m row ${i}`).toBe(xM[i % COLS]);
      expect(Number(c[3])).toBe(yM[Math.floor(i / COLS)]);
      if (c[4] !== '') expect(Math.fround(Number(c[4]))).toBe(rho.data[i]);
      expect(Math.fround(Number(c[5]))).toBe(T.data[i]);
      expect(Math.fround(Number(c[6]))).toBe(dx.data[i]);
    }
  });
  it.skipIf(skipNumpy)('reads back with numpy.genfromtxt (empty → nan)', () => {
    const p = path.join(dir, 's.csv');
    writeFileSync(p, csv);
    const r = runPython<{ names: string[]; rho: (number | null)[] }>(
      PY_PRELUDE + `a = np.genfromtxt(sys.argv[1], delimiter=',', names=True, dtype=None, encoding='utf-8')
out({'names': list(a.dtype.names), 'rho': a['rho_kgm3'].astype(np.float32).astype(float)})`,
      [p],
    );
    expect(r.names).toContain('status');
    expect(mismatch(rho.data, r.rho)).toBe('');
  });
});

interface H5Read {
  attrs: Record<string, unknown>;
  x_px: number[];
  y_m: number[];
  units: Record<string, string>;
  desc: Record<string, string>;
  shape: number[];
  dtype: string;
  rho: (number | null)[];
  T: (number | null)[];
  status: number[];
  names: string[];
  coord_units: string;
}

describe.skipIf(skipH5)('HDF5 read back with h5py', () => {
  it('datasets, coordinates (px and m) with units, settings JSON, status names', async () => {
    const [file] = await writeFieldSet(dir, 'h5case', sampleSet, ['h5']);
    const r = runPython<H5Read>(
      PY_PRELUDE + `import h5py
f = h5py.File(sys.argv[1], 'r')
def s(v): return v.decode() if isinstance(v, bytes) else v
out({'attrs': {k: s(v) for k, v in f.attrs.items()}, 'x_px': f['grid/x_px'][()], 'y_m': f['grid/y_m'][()],
     'coord_units': s(f['grid/x_m'].attrs['units']),
     'units': {k: s(d.attrs['units']) for k, d in f['fields'].items()}, 'desc': {k: s(d.attrs['description']) for k, d in f['fields'].items()},
     'shape': f['fields/rho'].shape, 'dtype': str(f['fields/rho'].dtype), 'rho': f['fields/rho'][()].ravel(), 'T': f['fields/T'][()].ravel(),
     'status': f['categories/status'][()].ravel(), 'names': [s(v) for v in f['categories/status'].attrs['names']]})`,
      [file!.path],
    );
    expect(r.shape).toEqual([ROWS, COLS]);
    expect(r.dtype).toBe('float32');
    expect(mismatch(rho.data, r.rho)).toBe('');
    expect(mismatch(T.data, r.T)).toBe('');
    expect(r.x_px).toEqual(Array.from(xPx));
    expect(r.y_m).toEqual(Array.from(yM));
    expect(r.coord_units).toBe('m');
    expect(r.units).toEqual({ rho: 'kg/m^3', T: 'K', dx: 'px', dy: 'px' });
    expect(r.desc['T']).toMatch(/temperature/);
    expect(JSON.parse(r.attrs['settings'] as string)).toEqual(sampleSet.settings);
    expect(r.attrs['title']).toBe('sample result');
    expect(r.attrs['window_px']).toBe(32);
    expect(r.status).toEqual(Array.from(status));
    expect(r.names).toEqual(['valid', 'replaced', 'masked', 'failed']);
  });
});

interface VtiRead {
  origin: number[];
  spacing: number[];
  extent: number[];
  names: string[];
  header_ok: boolean;
  rho: (number | null)[];
  disp: (number | null)[];
  status: number[];
}

describe.skipIf(skipNumpy)('VTK .vti read back with xml.etree + base64 + numpy', () => {
  it('y up (bottom row first), Origin/Spacing in metres, arrays named with units, vector y flipped', async () => {
    const [file] = await writeFieldSet(dir, 'vticase', sampleSet, ['vti']);
    const r = runPython<VtiRead>(
      PY_PRELUDE + `import xml.etree.ElementTree as ET, base64, struct
root = ET.parse(sys.argv[1]).getroot()
img = root.find('ImageData')
arrs = {}
ok = True
for da in img.iter('DataArray'):
    raw = base64.b64decode(da.text.strip())
    n = struct.unpack('<I', raw[:4])[0]
    ok = ok and n == len(raw) - 4
    dt = {'Float32': '<f4', 'UInt8': 'u1'}[da.get('type')]
    arrs[da.get('Name')] = np.frombuffer(raw[4:], dtype=dt).reshape(-1, int(da.get('NumberOfComponents')))
ext = [int(v) for v in img.get('WholeExtent').split()]
ny, nx = ext[3] + 1, ext[1] + 1
out({'origin': [float(v) for v in img.get('Origin').split()], 'spacing': [float(v) for v in img.get('Spacing').split()],
     'extent': ext, 'names': list(arrs.keys()), 'header_ok': ok,
     'rho': arrs['rho_kgm3'][:, 0].reshape(ny, nx)[::-1].ravel(),
     'disp': arrs['displacement_px'].reshape(ny, nx, 3)[::-1].ravel(),
     'status': arrs['status'][:, 0].reshape(ny, nx)[::-1].ravel()})`,
      [file!.path],
    );
    expect(r.header_ok).toBe(true);
    expect(r.extent).toEqual([0, COLS - 1, 0, ROWS - 1, 0, 0]);
    expect(r.names).toEqual(['rho_kgm3', 'T_K', 'dx_px', 'dy_px', 'displacement_px', 'status']);
    // origin = bottom-left grid point in metres: x of column 0, y of the last (bottom) row
    expect(r.origin[0]).toBeCloseTo(xM[0]!, 15);
    expect(r.origin[1]).toBeCloseTo(yM[ROWS - 1]!, 15);
    expect(r.spacing[0]).toBeCloseTo(1.6e-3, 15);
    expect(r.spacing[1]).toBeCloseTo(1.6e-3, 15);
    // after flipping VTK rows back, values equal the image-order field exactly
    expect(mismatch(rho.data, r.rho)).toBe('');
    expect(r.status).toEqual(Array.from(status));
    for (let i = 0; i < COLS * ROWS; i++) {
      expect(r.disp[3 * i]).toBe(dx.data[i]);
      expect(r.disp[3 * i + 1]).toBe(-dy.data[i]!); // VTK frame: y up
      expect(r.disp[3 * i + 2]).toBe(0);
    }
  });
});

interface MatRead {
  shape: number[];
  dtype: string;
  rho: (number | null)[];
  rho_r2c4: number;
  x_px: number[];
  y_m: number[];
  status: number[];
  status_names: string;
  units: Record<string, string>;
  settings: string;
  title: string;
}

describe.skipIf(skipScipy)('MAT v5 read back with scipy.io.loadmat', () => {
  it('single rows×cols, orientation rho(row, col) = image row/col, coordinates, units struct', async () => {
    const [file] = await writeFieldSet(dir, 'matcase', sampleSet, ['mat']);
    const r = runPython<MatRead>(
      PY_PRELUDE + `import scipy.io
m = scipy.io.loadmat(sys.argv[1], squeeze_me=True, struct_as_record=False, mat_dtype=False)
u = m['units']
out({'shape': m['rho'].shape, 'dtype': str(m['rho'].dtype), 'rho': m['rho'].ravel(), 'rho_r2c4': m['rho'][2, 4],
     'x_px': m['x_px'], 'y_m': m['y_m'], 'status': m['status'].ravel(), 'status_names': str(m['status_names']),
     'units': {k: str(getattr(u, k)) for k in u._fieldnames}, 'settings': str(m['settings_json']), 'title': str(m['title'])})`,
      [file!.path],
    );
    expect(r.shape).toEqual([ROWS, COLS]);
    expect(r.dtype).toBe('float32');
    expect(mismatch(rho.data, r.rho)).toBe(''); // numpy ravel is row-major: same order as the field
    expect(r.rho_r2c4).toBe(rho.data[4 + 2 * COLS]); // MATLAB rho(3, 5) = image row 2, column 4 (0-based)
    expect(r.x_px).toEqual(Array.from(xPx));
    expect(r.y_m).toEqual(Array.from(yM));
    expect(r.status).toEqual(Array.from(status));
    expect(r.status_names).toBe('valid,replaced,masked,failed');
    expect(r.units).toEqual({ rho: 'kg/m^3', T: 'K', dx: 'px', dy: 'px' });
    expect(JSON.parse(r.settings)).toEqual(sampleSet.settings);
    expect(r.title).toBe('sample result');
  });
});

describe('writeFieldSet(dir, base, set, formats)', () => {
  it('parseFormats accepts tokens and rejects unknown ones naming the allowed list', () => {
    expect(parseFormats('npy, HDF5,png,npy')).toEqual(['npy', 'h5', 'png']);
    expect(() => parseFormats('npy,xls')).toThrow(/one of npy, h5, vti, mat, csv, png, svg.*"xls"/);
  });
  it('writes the listed files and refuses to overwrite any of them', async () => {
    const d = path.join(dir, 'set1');
    const files = await writeFieldSet(d, 'density', sampleSet, ['npy', 'csv', 'svg']);
    const names = files.map((f) => path.basename(f.path));
    expect(names).toEqual(expect.arrayContaining([
      'density_rho.npy', 'density_T.npy', 'density_displacement.npy', 'density_status.npy', 'density_x_px.npy', 'density_y_m.npy',
      'density.csv', 'density_rho.svg', 'density_dx.svg',
    ]));
    for (const f of files) expect(existsSync(f.path), f.path).toBe(true);
    expect(readFileSync(path.join(d, 'density_rho.svg'), 'utf8')).toMatch(/<svg[^>]*font-family="DejaVu Sans, sans-serif"/);
    const e = await writeFieldSet(d, 'density', sampleSet, ['csv']).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(RhofieldError);
    expect((e as RhofieldError).kind).toBe('input');
    expect((e as RhofieldError).message).toMatch(/density\.csv already exists/);
    await writeFieldSet(d, 'density', sampleSet, ['csv'], { overwrite: true });
  });
  it('rejects a field of the wrong size naming both sizes', async () => {
    const bad: FieldSet = { ...sampleSet, fields: [{ name: 'rho', units: 'kg/m^3', description: 'd', data: { width: 3, height: 2, data: new Float32Array(6) } }] };
    await expect(writeFieldSet(path.join(dir, 'bad'), 'x', bad, ['npy'])).rejects.toThrow(/7×5 values.*3×2/);
  });
});
