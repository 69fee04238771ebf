/**
 * Printable random-dot backgrounds: non-overlapping black discs on white, with a scale bar and a label
 * (page size, dot diameter, fill, seed) in the bottom margin so a print can be checked with a ruler.
 *
 * Placement: random sequential addition ("dart throwing") accelerated by a grid hash. The hash cell
 * has side D/√2, so a cell holds at most one centre; candidates are drawn in a random still-open cell
 * and a cell is closed after {@link CELL_TRIES} failed tries (a standard speed-up of dart throwing for
 * Poisson-disc sampling, e.g. Dunbar & Humphreys 2006, ACM Trans. Graph. 25:503). Random sequential
 * addition of discs jams at a covered fraction near 0.547 (Feder 1980, J. Theor. Biol. 87:237), so
 * fills above 0.5 are refused; denser packings also turn locally periodic, which confuses correlation.
 *
 * Page coordinates: metres from the top-left corner, y down. Outputs:
 * - SVG: width/height in mm with a viewBox in mm (1 user unit = 1 mm), exact to the requested size;
 * - PDF 1.4 written here (ISO 32000-1 structure: catalog, pages, page with a MediaBox in points,
 *   1 mm = 72/25.4 pt, one Flate-compressed content stream); the disc is a Form XObject of four
 *   cubic Bézier arcs with the control distance k = 4(√2 − 1)/3 · r (the usual quarter-circle
 *   approximation, radial error 0.027 %), placed once per dot by a translation (`cm`); text uses the
 *   standard Helvetica font (no embedding);
 * - PNG: the SVG rasterised by sharp (librsvg) at the requested DPI, refused above
 *   {@link MAX_PNG_PIXELS} pixels.
 */
import { deflateSync } from 'node:zlib';
import { loadSharp } from '../util/optionalModules.js';
import { createRng } from '../util/rng.js';
import { invalidParameter, RhofieldError } from '../util/errors.js';

/** Largest PNG the pattern writer makes, pixels (200 MP: about 600 MB of RGBA working memory). */
export const MAX_PNG_PIXELS = 200e6;
/** Largest page side, m (2 m: larger than A0's long side, 1189 mm). */
export const MAX_PAGE_SIDE = 2;
/** Largest number of dots in one pattern. */
export const MAX_PATTERN_DOTS = 3e6;
/** Failed tries after which a grid cell is closed. */
export const CELL_TRIES = 30;
/** Margin on every side, m; the bottom margin adds a band for the scale bar and the label. */
const MARGIN = 5e-3;
const LABEL_BAND = 10e-3;

/** Options of {@link generatePattern}; lengths in metres. */
export interface PatternOptions {
  /** Page width, m. */
  readonly width: number;
  /** Page height, m. */
  readonly height: number;
  /** Dot diameter, m. */
  readonly dotDiameter: number;
  /** Fraction of the dotted area covered by dots, (0, 0.5]. Default 0.4. */
  readonly fill?: number;
  /** Random seed (integer). Default 1. */
  readonly seed?: number;
}

/** A generated pattern. Lengths in metres, page coordinates from the top-left corner, y down. */
export interface DotPattern {
  readonly width: number;
  readonly height: number;
  readonly dotDiameter: number;
  readonly fill: number;
  readonly seed: number;
  /** Dotted rectangle [x0, y0, x1, y1], m; every dot lies entirely inside it. */
  readonly area: readonly [number, number, number, number];
  /** Dot centres, interleaved x, y (m). */
  readonly centres: Float64Array;
  /** Number of dots. */
  readonly count: number;
  /** Covered fraction actually placed: count·πD²/4 / area. */
  readonly achievedFill: number;
}

/**
 * Parse a length with a unit: mm, cm, m or in (e.g. "297mm", "0.6 mm", "8.5in").
 * @param name option name for messages.
 * @returns metres.
 * @throws RhofieldError (usage) without a unit, with an unknown unit, or for a non-positive value.
 */
export function parseLength(name: string, raw: string): number {
  const m = /^\s*([+-]?\d*\.?\d+(?:e[+-]?\d+)?)\s*(mm|cm|m|in)\s*$/i.exec(raw);
  if (!m) throw invalidParameter(name, 'a length with a unit (mm, cm, m or in), e.g. "297mm"', raw);
  const v = Number(m[1]);
  const unit = (m[2] ?? '').toLowerCase();
  const scale = unit === 'mm' ? 1e-3 : unit === 'cm' ? 1e-2 : unit === 'in' ? 0.0254 : 1;
  if (!(v > 0)) throw invalidParameter(name, 'a positive length', raw);
  return v * scale;
}

/** Check the fill fraction. */
function checkFill(fill: number): void {
  if (!(fill > 0 && fill <= 0.5)) {
    throw invalidParameter(
      'fill',
      'a fraction in (0, 0.5]',
      fill,
      'random non-overlapping dots jam near 0.55, and denser packing turns periodic and confuses correlation; 0.3–0.45 is a good range',
    );
  }
}

/**
 * Place non-overlapping random dots on a page.
 * @param o page size, dot diameter (m), fill (default 0.4), seed (default 1).
 * @returns the {@link DotPattern}; exactly round(fill·area/(πD²/4)) dots.
 * @throws RhofieldError (usage) for bad sizes or fill; (processing) if the fill could not be reached.
 */
export function generatePattern(o: PatternOptions): DotPattern {
  const fill = o.fill ?? 0.4;
  const seed = o.seed ?? 1;
  for (const k of ['width', 'height', 'dotDiameter'] as const) {
    const v = o[k];
    if (!(v > 0) || !Number.isFinite(v)) throw invalidParameter(k, 'a positive length in metres', v);
  }
  if (o.width > MAX_PAGE_SIDE || o.height > MAX_PAGE_SIDE) {
    throw invalidParameter('page size', `sides up to ${MAX_PAGE_SIDE * 1e3} mm`, `${(o.width * 1e3).toFixed(1)} × ${(o.height * 1e3).toFixed(1)} mm`, 'print large backgrounds as tiles');
  }
  checkFill(fill);
  if (!Number.isInteger(seed)) throw invalidParameter('seed', 'an integer', seed);
  const D = o.dotDiameter;
  const r = D / 2;
  const x0 = MARGIN;
  const y0 = MARGIN;
  const x1 = o.width - MARGIN;
  const y1 = o.height - MARGIN - LABEL_BAND;
  if (x1 - x0 < 10 * D || y1 - y0 < 10 * D) {
    throw invalidParameter('page size', `at least 10 dots (${(10 * D * 1e3).toFixed(1)} mm) plus margins (10 mm wide, 20 mm high) per side`, `${(o.width * 1e3).toFixed(1)} × ${(o.height * 1e3).toFixed(1)} mm`);
  }
  const area = (x1 - x0) * (y1 - y0);
  const target = Math.round((fill * area) / (Math.PI * r * r));
  if (target > MAX_PATTERN_DOTS) {
    throw invalidParameter('dot count', `at most ${MAX_PATTERN_DOTS} dots`, target, 'use larger dots or a smaller page');
  }
  // Centres lie in [x0 + r, x1 − r] × [y0 + r, y1 − r] so every disc is inside the area.
  const cx0 = x0 + r;
  const cy0 = y0 + r;
  const cw = x1 - x0 - D;
  const ch = y1 - y0 - D;
  const cell = D / Math.SQRT2;
  const nx = Math.max(1, Math.ceil(cw / cell));
  const ny = Math.max(1, Math.ceil(ch / cell));
  const grid = new Int32Array(nx * ny).fill(-1);
  const open = new Int32Array(nx * ny);
  for (let i = 0; i < open.length; i++) open[i] = i;
  const tries = new Uint8Array(nx * ny);
  let nOpen = open.length;
  const pts = new Float64Array(2 * target);
  let count = 0;
  const rng = createRng(seed);
  const D2 = D * D;
  while (count < target && nOpen > 0) {
    const k = Math.floor(rng.next() * nOpen);
    const c = open[k]!;
    const gx = c % nx;
    const gy = (c - gx) / nx;
    const px = cx0 + (gx + rng.next()) * cell;
    const py = cy0 + (gy + rng.next()) * cell;
    let ok = px <= cx0 + cw && py <= cy0 + ch;
    for (let j = Math.max(0, gy - 2); ok && j <= Math.min(ny - 1, gy + 2); j++) {
      for (let i = Math.max(0, gx - 2); i <= Math.min(nx - 1, gx + 2); i++) {
        const q = grid[i + j * nx]!;
        if (q >= 0) {
          const dx = pts[2 * q]! - px;
          const dy = pts[2 * q + 1]! - py;
          if (dx * dx + dy * dy < D2) {
            ok = false;
            break;
          }
        }
      }
    }
    if (ok) {
      pts[2 * count] = px;
      pts[2 * count + 1] = py;
      grid[c] = count++;
    }
    if (ok || ++tries[c]! >= CELL_TRIES) open[k] = open[--nOpen]!;
  }
  if (count < target) {
    throw new RhofieldError('processing', `could place only ${count} of ${target} dots (fill ${((count * Math.PI * r * r) / area).toFixed(3)} of ${fill}); lower the fill`);
  }
  return { width: o.width, height: o.height, dotDiameter: D, fill, seed, area: [x0, y0, x1, y1], centres: pts, count, achievedFill: (count * Math.PI * r * r) / area };
}

/** Length of the scale bar, m: the largest of 10, 20, 50, 100, 200 mm fitting in half the page width. */
function scaleBarLength(p: DotPattern): number {
  let best = 10e-3;
  for (const L of [10e-3, 20e-3, 50e-3, 100e-3, 200e-3]) if (L <= p.width / 2 - MARGIN) best = L;
  return best;
}

function labelText(p: DotPattern): string {
  const mm = (v: number): string => +(v * 1e3).toFixed(3) + '';
  return `random dots ${mm(p.width)} x ${mm(p.height)} mm, dot ${mm(p.dotDiameter)} mm, fill ${p.fill}, seed ${p.seed}, ${p.count} dots`;
}

/** Label and scale-bar geometry in page metres: bar rectangle and text baseline positions. */
function furniture(p: DotPattern) {
  const L = scaleBarLength(p);
  const barY = p.height - MARGIN - LABEL_BAND + 4.5e-3;
  const s = labelText(p);
  // Font shrinks on narrow pages so the label fits on one line (about 0.6 em per character).
  const fontSize = Math.min(2.5e-3, (p.width - 2 * MARGIN) / (0.6 * s.length));
  return { bar: { x: MARGIN, y: barY, w: L, h: 1e-3 }, barText: { x: MARGIN, y: barY - 1e-3, s: `${+(L * 1e3).toFixed(0)} mm` }, label: { x: MARGIN, y: p.height - MARGIN - 0.5e-3, s }, fontSize };
}

const f4 = (v: number): string => (+v.toFixed(4)).toString();
const esc = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;');

/**
 * The pattern as SVG: width/height in mm and a viewBox in mm (1 user unit = 1 mm).
 * @returns SVG text.
 */
export function patternToSvg(p: DotPattern): string {
  return svgText(p);
}

/** SVG text; `pixelSize` replaces the mm width/height by a pixel size (for rasterising 1:1). */
function svgText(p: DotPattern, pixelSize?: { width: number; height: number }): string {
  const W = p.width * 1e3;
  const H = p.height * 1e3;
  const size = pixelSize ? `width="${pixelSize.width}" height="${pixelSize.height}"` : `width="${f4(W)}mm" height="${f4(H)}mm"`;
  const r = f4((p.dotDiameter * 1e3) / 2);
  const fu = furniture(p);
  const out: string[] = [
    `<?xml version="1.0" encoding="UTF-8"?>`,
    `<svg xmlns="http://www.w3.org/2000/svg" ${size} viewBox="0 0 ${f4(W)} ${f4(H)}">`,
    `<rect x="0" y="0" width="${f4(W)}" height="${f4(H)}" fill="#ffffff"/>`,
    `<g fill="#000000" id="dots">`,
  ];
  for (let i = 0; i < p.count; i++) out.push(`<circle cx="${f4(p.centres[2 * i]! * 1e3)}" cy="${f4(p.centres[2 * i + 1]! * 1e3)}" r="${r}"/>`);
  out.push('</g>');
  const b = fu.bar;
  out.push(`<rect id="scalebar" x="${f4(b.x * 1e3)}" y="${f4(b.y * 1e3)}" width="${f4(b.w * 1e3)}" height="${f4(b.h * 1e3)}" fill="#000000"/>`);
  const font = `font-family="DejaVu Sans, Helvetica, Arial, sans-serif" font-size="${f4(fu.fontSize * 1e3)}" fill="#000000"`;
  out.push(`<text x="${f4(fu.barText.x * 1e3)}" y="${f4(fu.barText.y * 1e3)}" ${font}>${esc(fu.barText.s)}</text>`);
  out.push(`<text x="${f4(fu.label.x * 1e3)}" y="${f4(fu.label.y * 1e3)}" ${font}>${esc(fu.label.s)}</text>`);
  out.push('</svg>', '');
  return out.join('\n');
}

/** Points per metre: 1 in = 72 pt = 0.0254 m. */
const PT = 72 / 0.0254;
/** Bézier control distance for a quarter circle of unit radius: 4(√2 − 1)/3. */
const KAPPA = (4 * (Math.SQRT2 - 1)) / 3;

/**
 * The pattern as a one-page PDF 1.4 (vector): MediaBox in points, discs as four Bézier arcs each,
 * Flate-compressed content, Helvetica text.
 * @returns the PDF bytes.
 */
export function patternToPdf(p: DotPattern): Uint8Array {
  const W = p.width * PT;
  const H = p.height * PT;
  const r = (p.dotDiameter / 2) * PT;
  const k = KAPPA * r;
  // The disc, centred on the origin, as a Form XObject /Dot; each dot is a translation of it.
  const disc = Buffer.from(
    `0 g ${f4(r)} 0 m ${f4(r)} ${f4(k)} ${f4(k)} ${f4(r)} 0 ${f4(r)} c ${f4(-k)} ${f4(r)} ${f4(-r)} ${f4(k)} ${f4(-r)} 0 c ` +
      `${f4(-r)} ${f4(-k)} ${f4(-k)} ${f4(-r)} 0 ${f4(-r)} c ${f4(k)} ${f4(-r)} ${f4(r)} ${f4(-k)} ${f4(r)} 0 c f`,
    'latin1',
  );
  const parts: string[] = ['0 g'];
  for (let i = 0; i < p.count; i++) {
    const x = p.centres[2 * i]! * PT;
    const y = H - p.centres[2 * i + 1]! * PT;
    parts.push(`q 1 0 0 1 ${f4(x)} ${f4(y)} cm /Dot Do Q`);
  }
  const fu = furniture(p);
  const b = fu.bar;
  parts.push(`${f4(b.x * PT)} ${f4(H - (b.y + b.h) * PT)} ${f4(b.w * PT)} ${f4(b.h * PT)} re f`);
  const pdfStr = (s: string): string => s.replace(/[\\()]/g, (c) => '\\' + c);
  const fs = f4(fu.fontSize * PT);
  for (const t of [fu.barText, fu.label]) parts.push(`BT /F1 ${fs} Tf ${f4(t.x * PT)} ${f4(H - t.y * PT)} Td (${pdfStr(t.s)}) Tj ET`);
  const content = deflateSync(Buffer.from(parts.join('\n'), 'latin1'));

  const chunks: Buffer[] = [];
  const offsets: number[] = [];
  let pos = 0;
  const push = (b: Buffer | string): void => {
    const buf = typeof b === 'string' ? Buffer.from(b, 'latin1') : b;
    chunks.push(buf);
    pos += buf.length;
  };
  push('%PDF-1.4\n%\xe2\xe3\xcf\xd3\n');
  const obj = (n: number, body: string | Buffer[]): void => {
    offsets[n] = pos;
    push(`${n} 0 obj\n`);
    if (typeof body === 'string') push(body);
    else for (const b of body) push(b);
    push('\nendobj\n');
  };
  obj(1, '<< /Type /Catalog /Pages 2 0 R >>');
  obj(2, '<< /Type /Pages /Kids [3 0 R] /Count 1 >>');
  obj(3, `<< /Type /Page /Parent 2 0 R /MediaBox [0 0 ${f4(W)} ${f4(H)}] /Contents 4 0 R /Resources << /Font << /F1 5 0 R >> /XObject << /Dot 6 0 R >> >> >>`);
  obj(4, [Buffer.from(`<< /Length ${content.length} /Filter /FlateDecode >>\nstream\n`, 'latin1'), content, Buffer.from('\nendstream', 'latin1')]);
  obj(5, '<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica /Encoding /WinAnsiEncoding >>');
  const rb = f4(r * 1.01);
  obj(6, [Buffer.from(`<< /Type /XObject /Subtype /Form /BBox [-${rb} -${rb} ${rb} ${rb}] /Length ${disc.length} >>\nstream\n`, 'latin1'), disc, Buffer.from('\nendstream', 'latin1')]);
  const xref = pos;
  let x = 'xref\n0 7\n0000000000 65535 f \n';
  for (let n = 1; n <= 6; n++) x += String(offsets[n]).padStart(10, '0') + ' 00000 n \n';
  push(x);
  push(`trailer\n<< /Size 7 /Root 1 0 R >>\nstartxref\n${xref}\n%%EOF\n`);
  return new Uint8Array(Buffer.concat(chunks));
}

/** Pixel size of the PNG at a DPI: round(side / 25.4 mm · dpi). */
export function patternPngSize(p: DotPattern, dpi: number): { width: number; height: number } {
  return { width: Math.round((p.width / 0.0254) * dpi), height: Math.round((p.height / 0.0254) * dpi) };
}

/**
 * The pattern as an 8-bit grey PNG at `dpi`, rasterised from the SVG by sharp (librsvg).
 * @param dpi dots per inch, 50–2400.
 * @throws RhofieldError (usage) above {@link MAX_PNG_PIXELS} pixels.
 */
export async function patternToPng(p: DotPattern, dpi: number): Promise<Uint8Array> {
  if (!(dpi >= 50 && dpi <= 2400)) throw invalidParameter('dpi', 'a number 50–2400', dpi);
  const { width, height } = patternPngSize(p, dpi);
  if (width * height > MAX_PNG_PIXELS) {
    throw invalidParameter('PNG size', `at most ${MAX_PNG_PIXELS / 1e6} megapixels`, `${width} × ${height} px at ${dpi} dpi`, 'lower --dpi or write PDF/SVG (vector, any size)');
  }
  // The SVG is given its pixel size directly (librsvg then renders 1:1 at 72 dpi); the DPI is stored
  // in the PNG's pHYs chunk. (Giving sharp `density` with mm sizes scales twice.)
  const sharp = await loadSharp();
  const buf = await sharp(Buffer.from(svgText(p, { width, height })), { limitInputPixels: false })
    .flatten({ background: '#ffffff' })
    .toColourspace('b-w')
    .withDensity(dpi)
    .png()
    .toBuffer();
  return new Uint8Array(buf);
}
