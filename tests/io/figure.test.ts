import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { colormapLut, figureRange, niceTicks, renderFieldFigure, type Field } from '@rhofield/core';
import { IN_CI } from './python.js';

type RawOut = { data: Buffer; info: { width: number; height: number; channels: number } };
type SharpLike = (input?: unknown, opts?: unknown) => {
  raw(): { toBuffer(o: { resolveWithObject: true }): Promise<RawOut> };
  removeAlpha(): { raw(): { toBuffer(o: { resolveWithObject: true }): Promise<RawOut> } };
  metadata(): Promise<{ width?: number; height?: number; density?: number; format?: string }>;
};
// sharp is a dependency of @rhofield/core only (strict installs): resolve it from there.
const sharp = createRequire(new URL('../../packages/core/package.json', import.meta.url))('sharp') as SharpLike;
const dir = mkdtempSync(path.join(tmpdir(), 'rf-fig-'));

const W = 40;
const H = 24;
/** Non-symmetric test field: value = column + 100·row, NaN in the bottom-right 8×6 block. */
function testField(): Field {
  const data = new Float32Array(W * H);
  for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) data[x + y * W] = x >= W - 8 && y >= H - 6 ? NaN : x + 100 * y;
  return { width: W, height: H, data };
}

function embeddedPngs(svg: string): Buffer[] {
  return [...svg.matchAll(/xlink:href="data:image\/png;base64,([^"]+)"/g)].map((m) => Buffer.from(m[1]!, 'base64'));
}

async function inkWidth(png: Buffer): Promise<number> {
  const { data, info } = await sharp(png).removeAlpha().raw().toBuffer({ resolveWithObject: true });
  let x0 = info.width;
  let x1 = -1;
  for (let y = 0; y < info.height; y++) {
    for (let x = 0; x < info.width; x++) {
      if (data[info.channels * (x + y * info.width)]! < 128) {
        x0 = Math.min(x0, x);
        x1 = Math.max(x1, x);
      }
    }
  }
  return x1 - x0 + 1;
}

describe('fonts for figure text', () => {
  it('fontconfig lists fonts (fc-list non-empty; .ci/run installs fonts-dejavu-core)', () => {
    const r = spawnSync('fc-list', { encoding: 'utf8' });
    if (r.error && !IN_CI) {
      console.warn('[rhofield tests] fc-list not found; figure text may render as boxes');
      return;
    }
    expect(r.stdout.trim().length).toBeGreaterThan(0);
  });
  it('text renders with real glyphs: "WWWWWWWW" is much wider than "iiiiiiii" (missing fonts draw equal boxes)', async () => {
    const svg = (t: string) => Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg" width="400" height="40"><rect width="100%" height="100%" fill="#fff"/><text x="5" y="30" font-size="24" font-family="DejaVu Sans, sans-serif">${t}</text></svg>`);
    const wide = await inkWidth(svg('WWWWWWWW'));
    const narrow = await inkWidth(svg('iiiiiiii'));
    expect(wide / narrow).toBeGreaterThan(2.5);
  });
});

describe('niceTicks(min, max, count): 1-2-5 steps (Heckbert, Graphics Gems 1990)', () => {
  it('hand-checked ranges', () => {
    const close = (got: number[], want: number[]) => {
      expect(got.length, `${got} vs ${want}`).toBe(want.length);
      got.forEach((g, i) => expect(g).toBeCloseTo(want[i]!, 12));
    };
    close(niceTicks(0, 1, 5), [0, 0.2, 0.4, 0.6, 0.8, 1]);
    expect(Object.is(niceTicks(0, 1, 5)[0], -0)).toBe(false);
    close(niceTicks(-30, 30, 6), [-30, -20, -10, 0, 10, 20, 30]);
    close(niceTicks(1.05, 1.19, 5), [1.06, 1.08, 1.1, 1.12, 1.14, 1.16, 1.18]);
    expect(niceTicks(3, 3)).toEqual([3]);
  });
});

describe('renderFieldFigure(field, options)', () => {
  const field = testField();
  const fig = renderFieldFigure(field, {
    xMm: [-19.5, 19.5], // 1 mm cells
    yMm: [11.5, -11.5], // y up: row 0 at y = +11.5 mm
    title: 'Test & <figure>',
    quantity: 'density ρ',
    unit: 'kg/m³',
  });
  it('is one SVG with the title (escaped), axis labels in mm, colour-bar label with unit and DejaVu Sans text', () => {
    expect(fig.svg.startsWith('<svg')).toBe(true);
    expect(fig.svg).toMatch(/font-family="DejaVu Sans, sans-serif"/);
    expect(fig.svg).toContain('Test &amp; &lt;figure&gt;');
    expect(fig.svg).toContain('x (mm)');
    expect(fig.svg).toContain('y (mm)');
    expect(fig.svg).toContain('density ρ (kg/m³)');
    for (const t of ['−20', '−10', '0', '10', '20']) expect(fig.svg).toContain(`>${t}</text>`);
  });
  it('embeds the field as a PNG: row 0 at the top, viridis ends at the data range, NaN hatched grey', async () => {
    const [img] = embeddedPngs(fig.svg);
    const { data, info } = await sharp(img!).raw().toBuffer({ resolveWithObject: true });
    const px = (fx: number, fy: number) => {
      const x = Math.floor(fx * info.width);
      const y = Math.floor(fy * info.height);
      const o = info.channels * (x + y * info.width);
      return [data[o]!, data[o + 1]!, data[o + 2]!];
    };
    const lut = colormapLut('sequential');
    // top-left cell holds the minimum (0) → viridis(0); bottom-left cell row 23 → 2300, the maximum valid value is 2331
    expect(px(0.5 / W, 0.5 / H)).toEqual(Array.from(lut.subarray(0, 3)));
    const [lo, hi] = figureRange(field, {});
    expect([lo, hi]).toEqual([0, 31 + 2300]);
    // bottom-right block is NaN: neutral grey or hatch grey, never a colour-map colour
    const nan = px(1 - 2 / W, 1 - 2 / H);
    expect(nan[0]).toBe(nan[1]);
    expect(nan[1]).toBe(nan[2]);
    expect([208, 150]).toContain(nan[0]);
  });
  it('png() has the requested size; print size from widthMm and dpi, DPI written', async () => {
    const png = await fig.png();
    const m = await sharp(png).metadata();
    expect([m.format, m.width, m.height]).toEqual(['png', 800, fig.heightPx]);
    const print = renderFieldFigure(field, { xMm: [-19.5, 19.5], yMm: [11.5, -11.5], quantity: 'q', unit: '1', widthMm: 85, dpi: 300 });
    expect(print.widthPx).toBe(Math.round((85 / 25.4) * 300));
    expect(print.svg).toMatch(/width="85mm"/);
    const pm = await sharp(await print.png()).metadata();
    expect(pm.width).toBe(print.widthPx);
    expect(Math.round(pm.density ?? 0)).toBe(300);
    writeFileSync(path.join(dir, 'print.png'), await print.png());
  });
  it('diverging maps are symmetric about 0; tiny values get a power of ten in the label', () => {
    const f: Field = { width: 3, height: 2, data: Float32Array.of(-1e-4, 0, 3e-4, 1e-4, 2e-4, -2e-4) };
    expect(figureRange(f, { colormap: 'diverging' })).toEqual([-3e-4, 3e-4].map(Math.fround));
    const d = renderFieldFigure(f, { xMm: [0, 2], yMm: [0, 1], quantity: 'deflection', unit: 'rad', colormap: 'diverging' });
    expect(d.svg).toContain('deflection (10⁻⁴ rad)');
  });
  it('vectors: one arrow per drawn, finite vector, and a reference arrow with its length label', () => {
    const u = { width: W, height: H, data: new Float32Array(W * H).fill(2) };
    const v = { width: W, height: H, data: new Float32Array(W * H).fill(0) };
    u.data[0] = NaN;
    const f = renderFieldFigure(field, { xMm: [-19.5, 19.5], yMm: [11.5, -11.5], quantity: 'q', unit: 'px', vectors: { u, v, units: 'px', every: 4 } });
    const paths = [...f.svg.matchAll(/<path d="([^"]*)" fill="none" stroke="#000" stroke-width="1" /g)];
    const arrows = (paths[0]![1]!.match(/M/g) ?? []).length / 2; // shaft + head per arrow
    const drawn = Math.ceil((W - 1) / 4) * Math.ceil((H - 1) / 4); // offset 1, step 4
    expect(arrows).toBe(drawn); // NaN vector (0,0) is not on the drawn lattice (offset 1)
    expect(f.svg).toMatch(/>2 px<\/text>/);
  });
  it('rejects coordinates that do not fit the field', () => {
    expect(() => renderFieldFigure(field, { xMm: new Float64Array(5), yMm: [0, 1], quantity: 'q', unit: '' })).toThrow(/40 cell centres/);
  });
});
