/**
 * Read and validate a setup. Structural checks by zod (strict objects), then the cross-field physics
 * checks and the derived optical quantities (magnification, pixel sizes, displacement per radian), which
 * must be finite and positive; every failure is one line "expected X for <key path> but received Z"
 * naming the source (file name or "setup").
 *
 * A setup file is at most {@link MAX_SETUP_BYTES} bytes and nested at most {@link MAX_SETUP_DEPTH}
 * levels (a real setup uses 4): larger or deeper files are refused before they are parsed.
 */
import { readFileSync, statSync } from 'node:fs';
import type { z } from 'zod';
import { invalidParameter, inputError, RhofieldError } from '../util/errors.js';

/** Same one-line form as invalidParameter, for a received part that is a description, not a value. */
function described(name: string, expected: string, receivedText: string, fix?: string): RhofieldError {
  return new RhofieldError('usage', `expected ${expected} for ${name} but received ${receivedText}` + (fix ? `; ${fix}` : ''));
}
import { setupSchema, type Setup } from './schema.js';

/** Largest setup file read, bytes (1 MiB; a real setup is under 1 kB). */
export const MAX_SETUP_BYTES = 1 << 20;
/** Deepest nesting of objects and arrays in a setup file (a real setup uses 4 levels). */
export const MAX_SETUP_DEPTH = 32;
/** Distances beyond this (m) draw a warning from {@link setupWarnings}: a likely unit slip. */
export const FAR_DISTANCE_M = 1000;

type Issue = z.core.$ZodIssue;

function valueAt(root: unknown, path: readonly PropertyKey[]): { found: boolean; value: unknown } {
  let cur: unknown = root;
  for (const k of path) {
    if (cur === null || typeof cur !== 'object' || !Object.prototype.hasOwnProperty.call(cur, k as string)) {
      return { found: false, value: undefined };
    }
    cur = (cur as Record<string, unknown>)[k as string];
  }
  return { found: true, value: cur };
}

function keyPath(path: readonly PropertyKey[]): string {
  let s = '';
  for (const k of path) s += typeof k === 'number' ? `[${k}]` : (s ? '.' : '') + String(k);
  return s || '(top level)';
}

function issueToError(issue: Issue, input: unknown, source: string): RhofieldError {
  const where = (p: readonly PropertyKey[]) => `${source}: ${keyPath(p)}`;
  if (issue.code === 'unrecognized_keys') {
    const key = issue.keys[0] ?? '';
    const parent = issue.path.length ? keyPath(issue.path) : 'the top level';
    return described(
      `${source}: ${issue.path.length ? keyPath(issue.path.concat(key)) : key}`,
      `only known keys in ${parent}`,
      `the unknown key ${JSON.stringify(key)}`,
      'remove it or check its spelling (keys are case-sensitive)',
    );
  }
  // Descend into union branches for a more precise message when one branch matches the shape.
  if (issue.code === 'invalid_union' && issue.errors.length > 0) {
    const branches = issue.errors.filter((b) => b.length > 0);
    const best = branches.find((b) => b.some((i) => i.code !== 'invalid_type' || i.path.length > 0));
    if (best && best[0]) {
      const sub = best[0];
      if (sub.code === 'unrecognized_keys' || sub.path.length > 0) return issueToError({ ...sub, path: issue.path.concat(sub.path) } as Issue, input, source);
    }
  }
  if (issue.code === 'invalid_key') {
    const key = issue.path[issue.path.length - 1];
    return described(where(issue.path), issue.issues[0]?.message ?? 'a valid key', `the key ${JSON.stringify(String(key))}`);
  }
  const { found, value } = valueAt(input, issue.path);
  const received = found ? value : undefined;
  const expected = issue.message;
  if (!found) {
    return described(where(issue.path), expected, 'nothing (the key is missing)', `add ${keyPath(issue.path)}`);
  }
  return invalidParameter(where(issue.path), expected, received);
}

/**
 * Validate a parsed setup object.
 * @param json the parsed JSON value.
 * @param source name used in messages (a file name); default "setup".
 * @returns the validated {@link Setup}.
 * @throws RhofieldError (kind "usage") with one line naming the key path, the value received and what
 *   is expected.
 */
export function parseSetup(json: unknown, source = 'setup'): Setup {
  const r = setupSchema.safeParse(json);
  if (!r.success) {
    const first = r.error.issues[0];
    if (!first) throw invalidParameter(source, 'a valid setup', json);
    throw issueToError(first, json, source);
  }
  const s = r.data;
  const at = (p: string) => `${source}: ${p}`;
  const { camera: c, geometry: g, medium: m, flow, expected } = s;
  if (g.lensToBackground <= c.focalLength) {
    throw invalidParameter(at('geometry.lensToBackground'), `a distance larger than camera.focalLength (${c.focalLength} m)`, g.lensToBackground, 'the background must lie beyond the focal length to be imaged');
  }
  if (g.flowToBackground >= g.lensToBackground) {
    throw invalidParameter(at('geometry.flowToBackground'), `a distance smaller than geometry.lensToBackground (${g.lensToBackground} m)`, g.flowToBackground, 'the flow must lie between the lens and the background');
  }
  const given = (['gas', 'gladstoneDale', 'mixture'] as const).filter((k) => m[k] !== undefined);
  if (given.length !== 1) {
    throw described(at('medium'), 'exactly one of gas, gladstoneDale or mixture', given.length ? given.join(' and ') : 'none of them', 'keep one');
  }
  if (m.mixture !== undefined) {
    const entries = Object.entries(m.mixture);
    if (entries.length === 0) throw invalidParameter(at('medium.mixture'), 'at least one gas with its mass fraction', m.mixture);
    const sum = entries.reduce((a, [, y]) => a + y, 0);
    if (Math.abs(sum - 1) > 1e-6) {
      throw described(at('medium.mixture'), 'mass fractions summing to 1 (± 1e-6)', `fractions summing to ${+sum.toPrecision(10)}`, 'normalise the fractions');
    }
  }
  if (flow.type === 'planar' && typeof flow.reference === 'object') {
    const [x0, y0, x1, y1] = flow.reference.rectPx;
    if (!(x1 > x0 && y1 > y0)) {
      throw invalidParameter(at('flow.reference.rectPx'), 'a rectangle [x0, y0, x1, y1] with x1 > x0 and y1 > y0', flow.reference.rectPx);
    }
  }
  if (expected !== undefined) {
    const n = (expected.densityChange !== undefined ? 1 : 0) + (expected.temperatureChange !== undefined ? 1 : 0);
    if (n !== 1) throw described(at('expected'), 'exactly one of densityChange or temperatureChange', n ? 'both' : 'neither');
    const v = expected.densityChange ?? expected.temperatureChange;
    if (v === 0) throw invalidParameter(at(expected.densityChange !== undefined ? 'expected.densityChange' : 'expected.temperatureChange'), 'a non-zero change', 0);
  }
  checkDerived(s, source);
  return s;
}

/**
 * The optical quantities every command derives from a setup must be finite and positive: magnification
 * M = f/(Z_B − f), background-plane pixel p/M, flow-plane pixel p·Z_A·(Z_B − f)/(f·Z_B) and the
 * displacement per radian M·Z_D/p. Extreme but finite inputs (1e300 m) overflow them.
 */
function checkDerived(s: Setup, source: string): void {
  const f = s.camera.focalLength;
  const p = s.camera.pixelPitch;
  const zb = s.geometry.lensToBackground;
  const zd = s.geometry.flowToBackground;
  const M = f / (zb - f);
  const derived: Array<[string, number]> = [
    ['the magnification f/(Z_B − f)', M],
    ['the background-plane pixel size p/M', p / M],
    ['the flow-plane pixel size', (p * (zb - zd) * (zb - f)) / (f * zb)],
    ['the displacement per radian of deflection M·Z_D/p', (M * zd) / p],
    ['the deflection per pixel p/(M·Z_D)', p / (M * zd)],
  ];
  for (const [what, v] of derived) {
    if (!(Number.isFinite(v) && v > 0)) {
      throw new RhofieldError(
        'usage',
        `${source}: camera.focalLength ${f}, camera.pixelPitch ${p}, geometry.lensToBackground ${zb} and geometry.flowToBackground ${zd} give ${what} = ${v}, which is not a finite positive number; check these values and their unit (metres)`,
      );
    }
  }
}

/**
 * Plain-language warnings about a valid setup that is probably not what was meant: distances beyond
 * {@link FAR_DISTANCE_M} (large outdoor setups exist, so this is not an error) and an origin outside the
 * image.
 * @param setup a validated setup.
 * @param source file name used in the messages.
 * @param image the image size, px (default camera.sensorPx when given).
 */
export function setupWarnings(setup: Setup, source = 'setup', image?: { width: number; height: number }): string[] {
  const out: string[] = [];
  const far: Array<[string, number | undefined]> = [
    ['geometry.lensToBackground', setup.geometry.lensToBackground],
    ['geometry.flowToBackground', setup.geometry.flowToBackground],
    ['flow.span', setup.flow.type === 'planar' ? setup.flow.span : undefined],
    ['expected.lengthScale', setup.expected?.lengthScale],
    ['camera.focalLength', setup.camera.focalLength],
  ];
  for (const [key, v] of far) {
    if (v !== undefined && v > FAR_DISTANCE_M) out.push(`${source}: ${key} is ${v} m, beyond ${FAR_DISTANCE_M / 1000} km; lengths are in metres, check the unit`);
  }
  const size = image ?? (setup.camera.sensorPx ? { width: setup.camera.sensorPx[0], height: setup.camera.sensorPx[1] } : undefined);
  const o = setup.geometry.originPx;
  if (o && size && !(o[0] >= 0 && o[0] <= size.width - 1 && o[1] >= 0 && o[1] <= size.height - 1)) {
    out.push(`${source}: geometry.originPx [${o[0]}, ${o[1]}] lies outside the ${size.width}×${size.height} px image; the metre coordinates start off the picture, check the value`);
  }
  return out;
}

/**
 * Deepest nesting of arrays and objects in a JSON text, by a scan of brackets outside strings (stops
 * counting once `limit` is passed). Cheap, and safe on input that would overflow a recursive parser.
 */
export function jsonDepth(text: string, limit = Infinity): number {
  let depth = 0;
  let max = 0;
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 0x5c) i++;
      else if (c === 0x22) inString = false;
    } else if (c === 0x22) inString = true;
    else if (c === 0x7b || c === 0x5b) {
      depth++;
      if (depth > max) {
        max = depth;
        if (max > limit) return max;
      }
    } else if (c === 0x7d || c === 0x5d) depth--;
  }
  return max;
}

/**
 * Where JSON.parse fails, for the messages that do not say (V8's "Unexpected token …"): the longest
 * prefix that is only incomplete (it fails at its very end) ends at the bad character. Binary search,
 * about 20 parses.
 */
function syntaxErrorPosition(text: string): number {
  const incomplete = (p: number): boolean => {
    try {
      JSON.parse(text.slice(0, p));
      return true;
    } catch (e) {
      const msg = (e as Error).message;
      if (/Unexpected end of JSON input/.test(msg)) return true;
      const at = /at position (\d+)/.exec(msg);
      return at !== null && Number(at[1]) >= p;
    }
  };
  let lo = 0;
  let hi = text.length;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (incomplete(mid)) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

function lineColumn(text: string, pos: number): { line: number; column: number } {
  let line = 1;
  let last = -1;
  for (let i = 0; i < pos && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      last = i;
    }
  }
  return { line, column: pos - last };
}

/**
 * Read a setup file (JSON) and validate it with {@link parseSetup}.
 * @param path file path.
 * @throws RhofieldError (kind "input") naming the file when it cannot be read, is larger than
 *   {@link MAX_SETUP_BYTES}, nested deeper than {@link MAX_SETUP_DEPTH} or not valid JSON (with line and
 *   column), or the validation error of {@link parseSetup}.
 */
export function loadSetup(path: string): Setup {
  let text: string;
  try {
    const size = statSync(path).size;
    if (size > MAX_SETUP_BYTES) {
      throw inputError(`setup file ${path} is ${size} bytes, more than a setup can be (${MAX_SETUP_BYTES} bytes); give the small JSON setup file (camera, geometry, medium, flow)`);
    }
    text = readFileSync(path, 'utf8');
  } catch (e) {
    if (e instanceof RhofieldError) throw e;
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'it is a directory' : code === 'EACCES' ? 'permission denied' : String((e as Error).message);
    throw inputError(`cannot read setup file ${path}: ${why}; check the path`);
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  if (jsonDepth(text, MAX_SETUP_DEPTH) > MAX_SETUP_DEPTH) {
    throw inputError(`setup file ${path} is nested more than ${MAX_SETUP_DEPTH} levels deep; a setup has 4 (see the README for its form)`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    const msg = (e as Error).message;
    const m = /position (\d+)/.exec(msg);
    const lc = /line (\d+) column (\d+)/.exec(msg);
    let where: { line: number; column: number };
    if (lc) where = { line: Number(lc[1]), column: Number(lc[2]) };
    else where = lineColumn(text, m ? Number(m[1]) : syntaxErrorPosition(text));
    // one line: drop the position and the excerpt of the text that some messages quote (it may span lines)
    const detail = msg
      .replace(/ in JSON at position \d+[\s\S]*$/, '')
      .replace(/ \(line \d+ column \d+\)$/, '')
      .replace(/, (?:\.\.\.)?"[\s\S]*$/, '')
      .replace(/'\r?\n'/, 'line break')
      .replace(/\s+/g, ' ')
      .replace(/[\u0000-\u001f\u007f]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
    throw inputError(`setup file ${path} is not valid JSON at line ${where.line}, column ${where.column}: ${detail}; fix the syntax there`);
  }
  return parseSetup(json, path);
}
