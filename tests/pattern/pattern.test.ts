import { describe, expect, it } from 'vitest';
import { inflateSync } from 'node:zlib';
import { createRequire } from 'node:module';
import { generatePattern, parseLength, patternToPdf, patternToPng, patternToSvg, patternPngSize } from '@rhofield/core';

// sharp is a dependency of @rhofield/core only (strict installs): resolve it from there.
const sharp = createRequire(new URL('../../packages/core/package.json', import.meta.url))('sharp') as SharpLike;
type SharpLike = (input: Uint8Array) => {
  toColourspace(s: string): { raw(): { toBuffer(o: { resolveWithObject: true }): Promise<{ data: Uint8Array; info: { width: number; height: number } }> } };
};

/** Check values: 1 in = 25.4 mm exactly (international inch, 1959); 1 pt = 1/72 in (PDF, ISO 32000-1 §8.3.2.3). */
const PT_PER_MM = 72 / 25.4;

interface Disc {
  x: number;
  y: number;
  r: number;
}

/** Minimum centre distance over all pairs, with a grid hash (cell = largest diameter). */
function minGapRatio(d: Disc[], D: number): number {
  const cells = new Map<string, Disc[]>();
  for (const c of d) {
    const k = `${Math.floor(c.x / D)},${Math.floor(c.y / D)}`;
    (cells.get(k) ?? cells.set(k, []).get(k)!).push(c);
  }
  let min = Infinity;
  for (const c of d) {
    const gx = Math.floor(c.x / D);
    const gy = Math.floor(c.y / D);
    for (let j = -1; j <= 1; j++)
      for (let i = -1; i <= 1; i++)
        for (const o of cells.get(`${gx + i},${gy + j}`) ?? []) {
          if (o === c) continue;
          min = Math.min(min, Math.hypot(o.x - c.x, o.y - c.y) / D);
        }
  }
  return min;
}

function parseSvg(svg: string) {
  const head = /<svg[^>]*width="([\d.]+)mm" height="([\d.]+)mm" viewBox="0 0 ([\d.]+) ([\d.]+)"/.exec(svg)!;
  const discs: Disc[] = [...svg.matchAll(/<circle cx="([\d.]+)" cy="([\d.]+)" r="([\d.]+)"\/>/g)].map((m) => ({ x: +m[1]!, y: +m[2]!, r: +m[3]! }));
  return { w: +head[1]!, h: +head[2]!, vw: +head[3]!, vh: +head[4]!, discs };
}

function parsePdf(pdf: Uint8Array) {
  const text = Buffer.from(pdf).toString('latin1');
  const mb = /\/MediaBox \[0 0 ([\d.]+) ([\d.]+)\]/.exec(text)!;
  // content stream (object 4, Flate) and the disc XObject (object 6)
  const m4 = /4 0 obj\n<< \/Length (\d+) \/Filter \/FlateDecode >>\nstream\n/.exec(text)!;
  const start = m4.index + m4[0].length;
  const content = inflateSync(Buffer.from(pdf.subarray(start, start + +m4[1]!))).toString('latin1');
  const m6 = /6 0 obj\n<<[^]*?>>\nstream\n([^]*?)\nendstream/.exec(text)!;
  const nums = m6[1]!.replace(/^0 g /, '').match(/-?[\d.]+/g)!.map(Number);
  // path "r 0 m … c … c … c … c f": the first move point is (r, 0); the second arc ends at (−r, 0)
  const r = nums[0]!;
  const leftX = nums[12]!;
  const centres = [...content.matchAll(/q 1 0 0 1 ([\d.]+) ([\d.]+) cm \/Dot Do Q/g)].map((m) => ({ x: +m[1]!, y: +m[2]!, r }));
  const xrefOk = /startxref\n(\d+)\n%%EOF/.exec(text);
  return { w: +mb[1]!, h: +mb[2]!, r, leftX, centres, xrefAt: xrefOk ? +xrefOk[1]! : -1, text };
}

describe('generatePattern / patternToSvg — A4 landscape, 0.6 mm dots, fill 0.4', () => {
  const pat = generatePattern({ width: parseLength('w', '297mm'), height: parseLength('h', '210mm'), dotDiameter: parseLength('d', '0.6mm'), fill: 0.4, seed: 7 });
  const svg = parseSvg(patternToSvg(pat));
  it('page size exact to 0.1 mm, viewBox in mm', () => {
    expect(Math.abs(svg.w - 297)).toBeLessThan(0.1);
    expect(Math.abs(svg.h - 210)).toBeLessThan(0.1);
    expect(svg.vw).toBe(svg.w);
    expect(svg.vh).toBe(svg.h);
  });
  it('every dot 0.6 mm, fill within 2 % of 0.4, no overlaps, all inside the dotted area', () => {
    expect(svg.discs.length).toBe(pat.count);
    expect(svg.discs.filter((d) => Math.abs(2 * d.r - 0.6) >= 1e-3).length).toBe(0);
    const [x0, y0, x1, y1] = pat.area.map((v) => v * 1e3) as [number, number, number, number];
    const fill = (svg.discs.reduce((a, d) => a + Math.PI * d.r * d.r, 0)) / ((x1 - x0) * (y1 - y0));
    expect(Math.abs(fill - 0.4) / 0.4).toBeLessThan(0.02);
    const outside = svg.discs.filter((d) => d.x - d.r < x0 - 1e-3 || d.x + d.r > x1 + 1e-3 || d.y - d.r < y0 - 1e-3 || d.y + d.r > y1 + 1e-3);
    expect(outside.length).toBe(0);
    // centres at least one diameter apart (1e-4 mm rounding of the SVG numbers)
    expect(minGapRatio(svg.discs, 0.6)).toBeGreaterThanOrEqual(1 - 1e-3);
  });
  it('scale bar and label with size, dot and seed', () => {
    const t = patternToSvg(pat);
    expect(t).toMatch(/id="scalebar"[^>]*width="100"/);
    expect(t).toMatch(/297 x 210 mm, dot 0\.6 mm, fill 0\.4, seed 7/);
  });
});

describe('patternToPdf — vector, MediaBox in points', () => {
  const pat = generatePattern({ width: 0.15, height: 0.1, dotDiameter: 1e-3, fill: 0.45, seed: 2 });
  const pdf = parsePdf(patternToPdf(pat));
  it('MediaBox = size · 72/25.4 pt (exact to 0.1 mm), valid xref offset', () => {
    expect(Math.abs(pdf.w / PT_PER_MM - 150)).toBeLessThan(0.1);
    expect(Math.abs(pdf.h / PT_PER_MM - 100)).toBeLessThan(0.1);
    expect(pdf.text.slice(pdf.xrefAt, pdf.xrefAt + 4)).toBe('xref');
    expect(pdf.text.startsWith('%PDF-1.4')).toBe(true);
  });
  it('disc diameter 1 mm, fill within 2 %, no overlaps', () => {
    expect(Math.abs((2 * pdf.r) / PT_PER_MM - 1)).toBeLessThan(1e-3);
    expect(Math.abs(-pdf.leftX - pdf.r)).toBeLessThan(1e-3);
    const discs = pdf.centres.map((c) => ({ x: c.x / PT_PER_MM, y: c.y / PT_PER_MM, r: 0.5 }));
    const [x0, y0, x1, y1] = pat.area.map((v) => v * 1e3) as [number, number, number, number];
    const fill = (discs.length * Math.PI * 0.25) / ((x1 - x0) * (y1 - y0));
    expect(Math.abs(fill - 0.45) / 0.45).toBeLessThan(0.02);
    expect(minGapRatio(discs, 1)).toBeGreaterThanOrEqual(1 - 1e-3);
  });
});

describe('patternToPng — raster at a DPI', () => {
  it('pixel size = side/25.4 mm · dpi, grey, covered fraction ≈ fill in the dotted area', async () => {
    const pat = generatePattern({ width: 0.06, height: 0.05, dotDiameter: 0.8e-3, fill: 0.3, seed: 5 });
    const png = await patternToPng(pat, 300);
    const { data, info } = await sharp(png).toColourspace('b-w').raw().toBuffer({ resolveWithObject: true });
    // 60 mm / 25.4 · 300 = 708.66 → 709 px; 50 mm → 590.55 → 591 px
    expect([info.width, info.height]).toEqual([709, 591]);
    expect(patternPngSize(pat, 300)).toEqual({ width: 709, height: 591 });
    const [x0, y0, x1, y1] = pat.area.map((v) => Math.round((v / 0.0254) * 300)) as [number, number, number, number];
    let dark = 0;
    for (let y = y0; y < y1; y++) for (let x = x0; x < x1; x++) dark += (255 - data[x + y * info.width]!) / 255;
    const cover = dark / ((x1 - x0) * (y1 - y0));
    expect(Math.abs(cover - 0.3)).toBeLessThan(0.02);
  });
});

describe('bad pattern input', () => {
  it('lengths need a unit and must be positive', () => {
    expect(parseLength('--width', '8.5in')).toBeCloseTo(0.2159, 10);
    expect(parseLength('--width', '2cm')).toBeCloseTo(0.02, 12);
    expect(() => parseLength('--width', '297')).toThrow(/unit/);
    expect(() => parseLength('--width', '-297mm')).toThrow(/positive/);
    expect(() => parseLength('--width', '3 ft')).toThrow(/--width/);
  });
  it('fill outside (0, 0.5] and pages above 2 m are refused', () => {
    expect(() => generatePattern({ width: 0.2, height: 0.2, dotDiameter: 1e-3, fill: 0.55 })).toThrow(/jam near 0\.55/);
    expect(() => generatePattern({ width: 0.2, height: 0.2, dotDiameter: 1e-3, fill: 0 })).toThrow(/fill/);
    expect(() => generatePattern({ width: 3, height: 0.2, dotDiameter: 1e-3 })).toThrow(/page size/);
  });
});
