/**
 * Report figures of fields on a grid: one SVG string (text as real SVG text, font-family
 * "DejaVu Sans, sans-serif"; the field embedded as a PNG data URI at the output resolution) and a
 * PNG rasterised from it by sharp (librsvg).
 *
 * Layout and conventions (stated once, here):
 * - Axes in mm (or px with `axisUnit: 'px'`), equal scale on both axes. Row 0 of the field is drawn
 *   at the top, as in the image; the y axis is labelled with the given row coordinates, so y-up
 *   metre coordinates read upward. Coordinates are cell centres; cells are drawn as blocks
 *   (nearest value, no smoothing), assuming uniform spacing between the first and last centre.
 * - NaN values and masked cells (mask 0) are drawn neutral grey with diagonal hatching.
 * - Vectors are components in the image frame (+x right, +y down) and are drawn as seen in the
 *   image; a reference arrow with its length label sits below the plot.
 * - Colour bar: `sequential` (viridis), `diverging` (blue–white–red, symmetric about 0 by default),
 *   `cyclic` (sinebow), `grey`, `cividis`. Tick values beyond [10⁻², 10⁴) are shown with a power of
 *   ten in the label, e.g. "deflection (10⁻⁴ rad)".
 * - Size: `widthPx` (default 800) or, for print, `widthMm` and `dpi` (PNG width = widthMm/25.4·dpi;
 *   the SVG then carries its width in mm). All text scales with the figure (13/800 of the width).
 */
import { loadSharp } from '../util/optionalModules.js';
import { invalidParameter } from '../util/errors.js';
import type { Field, MaskField } from '../util/field.js';
import { colormapLut, type ColormapKind } from './colormaps.js';
import { encodePng, pngDataUri } from './encodePng.js';
import { formatTick, formatValue, niceStep, niceTicks, powerOfTenLabel } from './niceTicks.js';

/** An 8-bit RGB picture on a grid (3 bytes per cell, row-major, y down). */
export interface RgbImage {
  readonly width: number;
  readonly height: number;
  /** R, G, B per cell; `NaN` cells are marked by `valid` = 0 when given. */
  readonly data: Uint8Array;
  /** Optional per-cell validity (1 = has data); invalid cells are hatched. */
  readonly valid?: Uint8Array;
}

/** A vector overlay on the figure's grid. */
export interface FigureVectors {
  /** x component (image frame, +x right), same grid as the field. */
  readonly u: Field;
  /** y component (image frame, +y down), same grid as the field. */
  readonly v: Field;
  /** Units of the components, for the reference label (e.g. `px`, `mrad`). */
  readonly units: string;
  /** Draw every n-th vector along x and y (default: about 30 arrows across). */
  readonly every?: number;
  /** Reference arrow length in `units` (default: a 1-2-5 value near the 90th-percentile length). */
  readonly reference?: number;
  /** Arrow length in figure units (1/800 of the figure width) per unit of the vectors (default: auto). */
  readonly scale?: number;
}

/**
 * Contour lines of one level as segments in grid-index coordinates: segment k runs from
 * (segments[4k], segments[4k+1]) to (segments[4k+2], segments[4k+3]), x = column, y = row (cell
 * centres at integers).
 */
export interface ContourLevel {
  readonly level: number;
  readonly segments: Float64Array;
}

/** Options shared by {@link renderFieldFigure} and {@link renderRgbFigure}. */
export interface FigureFrameOptions {
  /** Column centres: one value per column, or [first, last]. mm unless `axisUnit` is 'px'. */
  readonly xMm: Float64Array | readonly number[];
  /** Row centres (row 0 = top row of the field): one value per row, or [first, last]. */
  readonly yMm: Float64Array | readonly number[];
  /** Unit of the axes (default 'mm'). */
  readonly axisUnit?: 'mm' | 'px';
  readonly title?: string;
  /** Cells to hatch as "no data" (0 = no data), same size as the field. */
  readonly mask?: MaskField;
  readonly vectors?: FigureVectors;
  /** Contour lines drawn over the field (and marked on the colour bar). */
  readonly contours?: readonly ContourLevel[];
  /** Output width in pixels (default 800). Ignored when `widthMm` and `dpi` are given. */
  readonly widthPx?: number;
  /** Print width in mm (with `dpi`). */
  readonly widthMm?: number;
  /** Print resolution, dots per inch (default 96); written into the PNG. */
  readonly dpi?: number;
}

/** Options of {@link renderFieldFigure}. */
export interface FieldFigureOptions extends FigureFrameOptions {
  /** Quantity name for the colour bar, e.g. "density". */
  readonly quantity: string;
  /** Unit of the field values, e.g. "kg/m³" ('' or '1' for dimensionless). */
  readonly unit: string;
  /** Colour-map kind (default 'sequential'). */
  readonly colormap?: ColormapKind;
  /** Centre a diverging scale on 0 (default true for 'diverging'). */
  readonly symmetric?: boolean;
  /** Fixed colour range [low, high] (default: finite data range). */
  readonly range?: readonly [number, number];
}

/** Options of {@link renderRgbFigure}. */
export interface RgbFigureOptions extends FigureFrameOptions {
  /** Key drawn right of the plot: a colour wheel (hue = direction, brightness = magnitude) with a label and extra lines (`maxLabel`, '\n'-separated), or none. */
  readonly key?: { readonly type: 'wheel'; readonly label: string; readonly maxLabel?: string } | { readonly type: 'none' };
}

/** A rendered figure. */
export interface Figure {
  /** Complete SVG document. */
  readonly svg: string;
  /** PNG size in pixels. */
  readonly widthPx: number;
  readonly heightPx: number;
  readonly dpi: number;
  /** Rasterise the SVG to PNG (sharp/librsvg), with the DPI written into the file. */
  png(): Promise<Buffer>;
}

const W0 = 800; // design width; all layout numbers below are in these units
const FONT = 'DejaVu Sans, sans-serif';
const NAN_GREY = [208, 208, 208] as const;
const HATCH = [150, 150, 150] as const;

function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}


function fmt(v: number): string {
  return (Math.round(v * 100) / 100).toString();
}

interface Axis {
  /** value at the start (left / top edge) and end (right / bottom edge) of the plot */
  readonly a: number;
  readonly b: number;
}

function axisOf(c: Float64Array | readonly number[], n: number, name: string): Axis {
  if (c.length !== n && c.length !== 2) throw invalidParameter(name, `${n} cell centres or [first, last]`, `${c.length} values`);
  const first = c[0]!;
  const last = c[c.length - 1]!;
  if (!Number.isFinite(first) || !Number.isFinite(last)) throw invalidParameter(name, 'finite coordinates', [first, last]);
  const d = n > 1 ? (last - first) / (n - 1) : 1;
  if (d === 0) throw invalidParameter(name, 'distinct first and last centres', [first, last]);
  return { a: first - d / 2, b: last + d / 2 };
}

interface Frame {
  readonly s: number; // output px per design unit
  readonly left: number;
  readonly top: number;
  readonly plotW: number;
  readonly plotH: number;
  readonly W: number;
  readonly H: number;
  readonly widthPx: number;
  readonly heightPx: number;
  readonly dpi: number;
  readonly widthMm?: number;
  readonly xAxis: Axis;
  readonly yAxis: Axis;
}

function frameOf(o: FigureFrameOptions, cols: number, rows: number, keyWidth: number): Frame {
  const xAxis = axisOf(o.xMm, cols, 'xMm');
  const yAxis = axisOf(o.yMm, rows, 'yMm');
  const dpi = o.dpi ?? 96;
  if (!(dpi > 0)) throw invalidParameter('dpi', 'a positive number', o.dpi);
  let widthPx = o.widthPx ?? 800;
  if (o.widthMm !== undefined) {
    if (!(o.widthMm > 0)) throw invalidParameter('widthMm', 'a positive width in mm', o.widthMm);
    widthPx = Math.round((o.widthMm / 25.4) * dpi);
  }
  if (!(widthPx >= 200 && widthPx <= 20000)) throw invalidParameter('figure width', '200–20000 px', widthPx);
  const left = 78;
  const top = o.title ? 44 : 18;
  const bottom = 58 + (o.vectors ? 30 : 0);
  const aspect = Math.abs(yAxis.b - yAxis.a) / Math.abs(xAxis.b - xAxis.a);
  let plotW = W0 - left - keyWidth - 16;
  let plotH = plotW * aspect;
  if (plotH > 620) {
    plotH = 620;
    plotW = plotH / aspect;
  }
  const H = top + Math.max(plotH, 160) + bottom;
  const s = widthPx / W0;
  return {
    s, left, top, plotW, plotH, W: W0, H, widthPx, heightPx: Math.round(H * s), dpi, xAxis, yAxis,
    ...(o.widthMm !== undefined ? { widthMm: o.widthMm } : {}),
  };
}

/** Fill an output-resolution RGB raster of the plot area from a per-cell colour function. */
function plotRaster(fr: Frame, cols: number, rows: number, colour: (i: number, out: Uint8Array, o: number) => boolean): { png: Buffer; pw: number; ph: number } {
  const pw = Math.max(1, Math.round(fr.plotW * fr.s));
  const ph = Math.max(1, Math.round(fr.plotH * fr.s));
  const out = new Uint8Array(pw * ph * 3);
  const period = Math.max(4, Math.round(9 * fr.s));
  const line = Math.max(1, Math.round(1.6 * fr.s));
  const colIdx = new Int32Array(pw);
  for (let x = 0; x < pw; x++) colIdx[x] = Math.min(cols - 1, Math.floor(((x + 0.5) * cols) / pw));
  let prevRow = -1;
  let prevComplete = false; // previous output row had no hatched pixel (hatching depends on x + y)
  for (let y = 0; y < ph; y++) {
    const r = Math.min(rows - 1, Math.floor(((y + 0.5) * rows) / ph));
    if (r === prevRow && prevComplete) {
      out.copyWithin(3 * y * pw, 3 * (y - 1) * pw, 3 * y * pw);
      continue;
    }
    let complete = true;
    for (let x = 0; x < pw; x++) {
      const o = 3 * (x + y * pw);
      if (!colour(colIdx[x]! + r * cols, out, o)) {
        complete = false;
        const c = (x + y) % period < line ? HATCH : NAN_GREY;
        out[o] = c[0];
        out[o + 1] = c[1];
        out[o + 2] = c[2];
      }
    }
    prevRow = r;
    prevComplete = complete;
  }
  // deflate level 3: about a third of level 6's time for ~1.4× the bytes on these block rasters
  return { png: encodePng(out, pw, ph, 3, 3), pw, ph };
}

function axesSvg(fr: Frame, unit: string): string {
  const { left, top, plotW, plotH, xAxis, yAxis } = fr;
  const parts: string[] = [];
  const tick = (v: number, ax: Axis, len: number) => (v - ax.a) / (ax.b - ax.a) * len;
  const xt = niceTicks(Math.min(xAxis.a, xAxis.b), Math.max(xAxis.a, xAxis.b), Math.max(3, Math.round(plotW / 90)));
  const xs = niceStep(Math.min(xAxis.a, xAxis.b), Math.max(xAxis.a, xAxis.b), Math.max(3, Math.round(plotW / 90)));
  for (const v of xt) {
    const x = left + tick(v, xAxis, plotW);
    parts.push(`<line x1="${fmt(x)}" y1="${fmt(top + plotH)}" x2="${fmt(x)}" y2="${fmt(top + plotH + 5)}" stroke="#000" stroke-width="1"/>`);
    parts.push(`<text x="${fmt(x)}" y="${fmt(top + plotH + 20)}" font-size="12" text-anchor="middle">${formatTick(v, xs)}</text>`);
  }
  const yt = niceTicks(Math.min(yAxis.a, yAxis.b), Math.max(yAxis.a, yAxis.b), Math.max(3, Math.round(plotH / 70)));
  const ys = niceStep(Math.min(yAxis.a, yAxis.b), Math.max(yAxis.a, yAxis.b), Math.max(3, Math.round(plotH / 70)));
  for (const v of yt) {
    const y = top + tick(v, yAxis, plotH);
    parts.push(`<line x1="${fmt(left - 5)}" y1="${fmt(y)}" x2="${fmt(left)}" y2="${fmt(y)}" stroke="#000" stroke-width="1"/>`);
    parts.push(`<text x="${fmt(left - 8)}" y="${fmt(y + 4)}" font-size="12" text-anchor="end">${formatTick(v, ys)}</text>`);
  }
  parts.push(`<rect x="${fmt(left)}" y="${fmt(top)}" width="${fmt(plotW)}" height="${fmt(plotH)}" fill="none" stroke="#000" stroke-width="1"/>`);
  parts.push(`<text x="${fmt(left + plotW / 2)}" y="${fmt(top + plotH + 40)}" font-size="13" text-anchor="middle">x (${unit})</text>`);
  const cy = top + plotH / 2;
  parts.push(`<text x="22" y="${fmt(cy)}" font-size="13" text-anchor="middle" transform="rotate(-90 22 ${fmt(cy)})">y (${unit})</text>`);
  return parts.join('\n');
}

function nice125(v: number): number {
  if (!(v > 0)) return 1;
  const p = 10 ** Math.floor(Math.log10(v));
  const e = v / p;
  return (e >= 5 ? 5 : e >= 2 ? 2 : 1) * p;
}

function vectorsSvg(fr: Frame, cols: number, rows: number, vec: FigureVectors): string {
  const { u, v } = vec;
  if (u.width !== cols || u.height !== rows || v.width !== cols || v.height !== rows) {
    throw invalidParameter('vectors', `components of ${cols}×${rows} (the field's grid)`, `${u.width}×${u.height} and ${v.width}×${v.height}`);
  }
  const every = vec.every ?? Math.max(1, Math.ceil(cols / 30));
  if (!(Number.isInteger(every) && every >= 1)) throw invalidParameter('vectors.every', 'an integer ≥ 1', vec.every);
  const cw = fr.plotW / cols;
  const ch = fr.plotH / rows;
  const mags: number[] = [];
  const off = Math.floor((every - 1) / 2);
  for (let r = off; r < rows; r += every) {
    for (let c = off; c < cols; c += every) {
      const m = Math.hypot(u.data[c + r * cols]!, v.data[c + r * cols]!);
      if (Number.isFinite(m)) mags.push(m);
    }
  }
  mags.sort((a, b) => a - b);
  const p90 = mags.length ? mags[Math.min(mags.length - 1, Math.floor(0.9 * mags.length))]! : 0;
  const ref = vec.reference ?? nice125(p90 > 0 ? p90 : 1);
  const scale = vec.scale ?? (0.9 * Math.min(cw, ch) * every) / (p90 > 0 ? p90 : 1);
  const arrow = (x0: number, y0: number, dx: number, dy: number): string => {
    const L = Math.hypot(dx, dy);
    if (!(L > 0.3)) return '';
    const x1 = x0 + dx;
    const y1 = y0 + dy;
    const h = Math.min(0.35 * L, 7);
    const a = Math.atan2(dy, dx);
    const hx1 = x1 - h * Math.cos(a - 0.45);
    const hy1 = y1 - h * Math.sin(a - 0.45);
    const hx2 = x1 - h * Math.cos(a + 0.45);
    const hy2 = y1 - h * Math.sin(a + 0.45);
    return `M${fmt(x0)} ${fmt(y0)}L${fmt(x1)} ${fmt(y1)}M${fmt(hx1)} ${fmt(hy1)}L${fmt(x1)} ${fmt(y1)}L${fmt(hx2)} ${fmt(hy2)}`;
  };
  const d: string[] = [];
  for (let r = off; r < rows; r += every) {
    for (let c = off; c < cols; c += every) {
      const du = u.data[c + r * cols]!;
      const dv = v.data[c + r * cols]!;
      if (!Number.isFinite(du) || !Number.isFinite(dv)) continue;
      d.push(arrow(fr.left + (c + 0.5) * cw, fr.top + (r + 0.5) * ch, du * scale, dv * scale));
    }
  }
  const path = d.join('');
  const refLen = ref * scale;
  const ry = fr.top + fr.plotH + 66;
  const rx1 = fr.left + fr.plotW;
  const refPath = arrow(rx1 - refLen, ry, refLen, 0);
  return [
    `<path d="${path}" fill="none" stroke="#fff" stroke-opacity="0.75" stroke-width="2.4" stroke-linecap="round"/>`,
    `<path d="${path}" fill="none" stroke="#000" stroke-width="1" stroke-linecap="round"/>`,
    `<path d="${refPath}" fill="none" stroke="#000" stroke-width="1.2"/>`,
    `<text x="${fmt(rx1 - refLen - 8)}" y="${fmt(ry + 4)}" font-size="12" text-anchor="end">${esc(`${formatValue(ref)} ${vec.units}`)}</text>`,
  ].join('\n');
}

function contoursSvg(fr: Frame, cols: number, rows: number, levels: readonly ContourLevel[]): string {
  const cw = fr.plotW / cols;
  const ch = fr.plotH / rows;
  const d: string[] = [];
  for (const lv of levels) {
    const s = lv.segments;
    for (let k = 0; k + 3 < s.length; k += 4) {
      d.push(`M${fmt(fr.left + (s[k]! + 0.5) * cw)} ${fmt(fr.top + (s[k + 1]! + 0.5) * ch)}L${fmt(fr.left + (s[k + 2]! + 0.5) * cw)} ${fmt(fr.top + (s[k + 3]! + 0.5) * ch)}`);
    }
  }
  return `<path d="${d.join('')}" fill="none" stroke="#000" stroke-width="0.9" stroke-linecap="round"/>`;
}

function svgDocument(fr: Frame, body: string, title: string | undefined): string {
  const size = fr.widthMm !== undefined
    ? `width="${fr.widthMm}mm" height="${fmt((fr.H / fr.W) * fr.widthMm)}mm"`
    : `width="${fr.widthPx}" height="${fr.heightPx}"`;
  return [
    `<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" ${size} viewBox="0 0 ${fr.W} ${fmt(fr.H)}" font-family="${FONT}">`,
    `<rect width="100%" height="100%" fill="#fff"/>`,
    title ? `<text x="${fmt(fr.W / 2)}" y="28" font-size="15" text-anchor="middle">${esc(title)}</text>` : '',
    body,
    `</svg>`,
  ].join('\n');
}

function makeFigure(fr: Frame, svg: string): Figure {
  return {
    svg,
    widthPx: fr.widthPx,
    heightPx: fr.heightPx,
    dpi: fr.dpi,
    async png() {
      // librsvg renders the SVG's own size at `density` dpi (72 = 1 px per SVG px).
      // zlib level 4: on these figures ~25 % less time than the default 6 for 1–5 % more bytes.
      const density = fr.widthMm !== undefined ? fr.dpi : 72;
      const sharp = await loadSharp();
      return sharp(Buffer.from(svg), { density, limitInputPixels: false })
        .resize(fr.widthPx, fr.heightPx, { fit: 'fill' })
        .flatten({ background: '#ffffff' })
        .withDensity(fr.dpi)
        .png({ compressionLevel: 4 })
        .toBuffer();
    },
  };
}

function imageTag(png: Buffer, x: number, y: number, w: number, h: number): string {
  const uri = pngDataUri(png);
  return `<image x="${fmt(x)}" y="${fmt(y)}" width="${fmt(w)}" height="${fmt(h)}" preserveAspectRatio="none" image-rendering="optimizeSpeed" xlink:href="${uri}" href="${uri}"/>`;
}

/** Colour range of a field for a figure (finite, unmasked values). */
export function figureRange(field: Field, o: Pick<FieldFigureOptions, 'range' | 'colormap' | 'symmetric' | 'mask'>): [number, number] {
  if (o.range) {
    const [a, b] = o.range;
    if (!(Number.isFinite(a) && Number.isFinite(b) && b > a)) throw invalidParameter('range', 'finite [low, high] with high > low', o.range);
    return [a, b];
  }
  let lo = Infinity;
  let hi = -Infinity;
  const m = o.mask?.data;
  for (let i = 0; i < field.data.length; i++) {
    const v = field.data[i]!;
    if (!Number.isFinite(v) || (m && !m[i])) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!(hi >= lo)) return [0, 1];
  if ((o.colormap === 'diverging' && o.symmetric !== false) || o.symmetric) {
    const a = Math.max(Math.abs(lo), Math.abs(hi)) || 1;
    return [-a, a];
  }
  if (hi === lo) {
    const d = Math.abs(lo) * 0.01 || 1;
    return [lo - d, hi + d];
  }
  return [lo, hi];
}

/**
 * Render a scalar field as a figure: axes in mm with nice ticks, a colour bar labelled with the
 * quantity and unit, a title, optional vectors, NaN/masked cells hatched grey.
 *
 * @param field values on the grid (width = columns, height = rows), NaN = no data.
 * @param options see {@link FieldFigureOptions}; `xMm`/`yMm` are cell centres.
 * @returns the SVG string and a `png()` rasteriser.
 * @throws RhofieldError (usage) for coordinate arrays, mask or vectors that do not fit the field.
 * @example renderFieldFigure(rho, { xMm, yMm, title: 'Plume', quantity: 'density', unit: 'kg/m³' })
 */
export function renderFieldFigure(field: Field, options: FieldFigureOptions): Figure {
  const cols = field.width;
  const rows = field.height;
  const mask = options.mask;
  if (mask && (mask.width !== cols || mask.height !== rows)) throw invalidParameter('mask', `${cols}×${rows} (the field)`, `${mask.width}×${mask.height}`);
  const fr = frameOf(options, cols, rows, 120);
  const kind = options.colormap ?? 'sequential';
  const lut = colormapLut(kind);
  const [lo, hi] = figureRange(field, { ...options, colormap: kind });
  const inv = 1 / (hi - lo);
  const md = mask?.data;
  const { png } = plotRaster(fr, cols, rows, (i, out, o) => {
    const v = field.data[i]!;
    if (!Number.isFinite(v) || (md && !md[i])) return false;
    const t = (v - lo) * inv;
    const k = 3 * (t >= 1 ? 255 : t > 0 ? Math.round(t * 255) : 0);
    out[o] = lut[k]!;
    out[o + 1] = lut[k + 1]!;
    out[o + 2] = lut[k + 2]!;
    return true;
  });
  // colour bar: 1 × 256 image, high values at the top
  const bar = new Uint8Array(256 * 3);
  for (let k = 0; k < 256; k++) bar.set(lut.subarray(3 * (255 - k), 3 * (255 - k) + 3), 3 * k);
  const bx = fr.left + fr.plotW + 22;
  const bw = 16;
  const parts = [imageTag(png, fr.left, fr.top, fr.plotW, fr.plotH), axesSvg(fr, options.axisUnit ?? 'mm')];
  parts.push(imageTag(encodePng(bar, 1, 256, 3), bx, fr.top, bw, fr.plotH));
  parts.push(`<rect x="${fmt(bx)}" y="${fmt(fr.top)}" width="${bw}" height="${fmt(fr.plotH)}" fill="none" stroke="#000" stroke-width="1"/>`);
  const big = Math.max(Math.abs(lo), Math.abs(hi));
  const k10 = big > 0 && (big < 1e-2 || big >= 1e4) ? Math.floor(Math.log10(big)) : 0;
  const f10 = 10 ** -k10;
  const nt = Math.max(3, Math.round(fr.plotH / 60));
  const step = niceStep(lo * f10, hi * f10, nt);
  for (const t of niceTicks(lo * f10, hi * f10, nt)) {
    const y = fr.top + fr.plotH * (1 - (t / f10 - lo) * inv);
    parts.push(`<line x1="${fmt(bx + bw)}" y1="${fmt(y)}" x2="${fmt(bx + bw + 5)}" y2="${fmt(y)}" stroke="#000" stroke-width="1"/>`);
    parts.push(`<text x="${fmt(bx + bw + 8)}" y="${fmt(y + 4)}" font-size="12">${formatTick(t, step)}</text>`);
  }
  const unit = options.unit.trim();
  const unitPart = k10 !== 0 ? `${powerOfTenLabel(k10)}${unit && unit !== '1' ? ' ' + unit : ''}` : unit && unit !== '1' ? unit : '';
  const label = unitPart ? `${options.quantity} (${unitPart})` : options.quantity;
  const lx = fr.W - 14;
  const ly = fr.top + fr.plotH / 2;
  parts.push(`<text x="${fmt(lx)}" y="${fmt(ly)}" font-size="13" text-anchor="middle" transform="rotate(-90 ${fmt(lx)} ${fmt(ly)})">${esc(label)}</text>`);
  for (const lv of options.contours ?? []) {
    const t = (lv.level - lo) * inv;
    if (t < 0 || t > 1) continue;
    const y = fr.top + fr.plotH * (1 - t);
    parts.push(`<line x1="${fmt(bx)}" y1="${fmt(y)}" x2="${fmt(bx + bw)}" y2="${fmt(y)}" stroke="#000" stroke-width="0.9"/>`);
  }
  if (options.contours?.length) parts.push(contoursSvg(fr, cols, rows, options.contours));
  if (options.vectors) parts.push(vectorsSvg(fr, cols, rows, options.vectors));
  return makeFigure(fr, svgDocument(fr, parts.join('\n'), options.title));
}

/**
 * The colour-wheel key picture: hue = direction (angle counter-clockwise from +x as seen on the
 * figure), brightness = magnitude (0 at the centre, full at the rim). `colourOf(angle, r)` must be
 * the same mapping the picture used.
 */
function wheelPng(sizePx: number, colourOf: (angle: number, r: number, out: Uint8Array, o: number) => void): Buffer {
  const out = new Uint8Array(sizePx * sizePx * 4);
  const c = (sizePx - 1) / 2;
  for (let y = 0; y < sizePx; y++) {
    for (let x = 0; x < sizePx; x++) {
      const dx = (x - c) / c;
      const dy = (c - y) / c; // up on screen = positive
      const r = Math.hypot(dx, dy);
      const o = 4 * (x + y * sizePx);
      if (r > 1) continue; // transparent
      colourOf(Math.atan2(dy, dx), r, out, o);
      out[o + 3] = 255;
    }
  }
  return encodePng(out, sizePx, sizePx, 4);
}

/**
 * Render an RGB picture (e.g. colour schlieren) with axes, title, optional vectors and a colour-wheel
 * key. Invalid cells (`valid` = 0 or mask 0) are hatched grey.
 *
 * @param image the picture on the grid.
 * @param options frame options plus `key`; for a wheel, `wheelColour(angle, r)` gives the key colours.
 */
export function renderRgbFigure(
  image: RgbImage,
  options: RgbFigureOptions & { readonly wheelColour?: (angle: number, r: number, out: Uint8Array, o: number) => void },
): Figure {
  const cols = image.width;
  const rows = image.height;
  if (image.data.length !== 3 * cols * rows) throw invalidParameter('image.data', `${3 * cols * rows} bytes (RGB)`, image.data.length);
  const mask = options.mask;
  if (mask && (mask.width !== cols || mask.height !== rows)) throw invalidParameter('mask', `${cols}×${rows} (the picture)`, `${mask.width}×${mask.height}`);
  const key = options.key ?? { type: 'none' as const };
  const fr = frameOf(options, cols, rows, key.type === 'wheel' ? 150 : 10);
  const md = mask?.data;
  const valid = image.valid;
  const { png } = plotRaster(fr, cols, rows, (i, out, o) => {
    if ((valid && !valid[i]) || (md && !md[i])) return false;
    out[o] = image.data[3 * i]!;
    out[o + 1] = image.data[3 * i + 1]!;
    out[o + 2] = image.data[3 * i + 2]!;
    return true;
  });
  const parts = [imageTag(png, fr.left, fr.top, fr.plotW, fr.plotH), axesSvg(fr, options.axisUnit ?? 'mm')];
  if (key.type === 'wheel' && options.wheelColour) {
    const d = 96;
    const cx = fr.left + fr.plotW + 22 + d / 2;
    const cy = fr.top + 20 + d / 2;
    parts.push(imageTag(wheelPng(Math.max(32, Math.round(d * fr.s)), options.wheelColour), cx - d / 2, cy - d / 2, d, d));
    parts.push(`<circle cx="${fmt(cx)}" cy="${fmt(cy)}" r="${d / 2}" fill="none" stroke="#000" stroke-width="0.8"/>`);
    parts.push(`<text x="${fmt(cx + d / 2 + 3)}" y="${fmt(cy + 4)}" font-size="11">+x</text>`);
    parts.push(`<text x="${fmt(cx)}" y="${fmt(cy - d / 2 - 4)}" font-size="11" text-anchor="middle">up</text>`);
    parts.push(`<text x="${fmt(cx)}" y="${fmt(cy + d / 2 + 16)}" font-size="12" text-anchor="middle">${esc(key.label)}</text>`);
    (key.maxLabel ?? '').split('\n').filter(Boolean).forEach((line, k) => {
      parts.push(`<text x="${fmt(cx)}" y="${fmt(cy + d / 2 + 32 + 15 * k)}" font-size="11" text-anchor="middle">${esc(line)}</text>`);
    });
  }
  if (options.contours?.length) parts.push(contoursSvg(fr, cols, rows, options.contours));
  if (options.vectors) parts.push(vectorsSvg(fr, cols, rows, options.vectors));
  return makeFigure(fr, svgDocument(fr, parts.join('\n'), options.title));
}
