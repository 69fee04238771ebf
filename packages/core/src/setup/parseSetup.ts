/**
 * Read and validate a setup (DESIGN §3a). Structural checks by zod (strict objects), then the
 * cross-field physics checks; every failure is one line "expected X for <key path> but received Z"
 * naming the source (file name or "setup").
 */
import { readFileSync } from 'node:fs';
import type { z } from 'zod';
import { invalidParameter, inputError, RhofieldError } from '../util/errors.js';

/** Same one-line form as invalidParameter, for a received part that is a description, not a value. */
function described(name: string, expected: string, receivedText: string, fix?: string): RhofieldError {
  return new RhofieldError('usage', `expected ${expected} for ${name} but received ${receivedText}` + (fix ? `; ${fix}` : ''));
}
import { setupSchema, type Setup } from './schema.js';

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
  return s;
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
 * @throws RhofieldError (kind "input") naming the file when it cannot be read or is not valid JSON
 *   (with line and column), or the validation error of {@link parseSetup}.
 */
export function loadSetup(path: string): Setup {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'it is a directory' : code === 'EACCES' ? 'permission denied' : String((e as Error).message);
    throw inputError(`cannot read setup file ${path}: ${why}; check the path`);
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    const msg = (e as Error).message;
    const m = /position (\d+)/.exec(msg);
    const lc = /line (\d+) column (\d+)/.exec(msg);
    let where: { line: number; column: number };
    if (lc) where = { line: Number(lc[1]), column: Number(lc[2]) };
    else where = lineColumn(text, m ? Number(m[1]) : text.length);
    const detail = msg.replace(/ in JSON at position \d+.*$/, '').replace(/ \(line \d+ column \d+\)$/, '');
    throw inputError(`setup file ${path} is not valid JSON at line ${where.line}, column ${where.column}: ${detail}; fix the syntax there`);
  }
  return parseSetup(json, path);
}
