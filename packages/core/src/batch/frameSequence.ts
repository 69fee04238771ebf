/**
 * Frame sequences: numbered patterns (`frame_%05d.tif`), wildcard patterns (`shots/run*.png`) and
 * frame ranges. Pure string logic; listing folders is left to the caller.
 *
 * Frame numbers: the number a `%d` pattern expands to; for a wildcard pattern, the 0-based position in
 * the naturally sorted match list; for a multi-page stack, the 0-based page index.
 */
import { invalidParameter } from '../util/errors.js';

/** An inclusive frame-number range with a step. */
export interface FrameRange {
  readonly first: number;
  readonly last: number;
  readonly step: number;
}

const NUMBERED = /%(0?)(\d*)d/;

/** True if `pattern` contains one printf-style integer field (`%d`, `%5d`, `%05d`). */
export function isNumberedPattern(pattern: string): boolean {
  return NUMBERED.test(pattern);
}

/** True if the last path segment of `pattern` contains a wildcard (`*`, `?` or `[...]`). */
export function isWildcardPattern(pattern: string): boolean {
  return /[*?[]/.test(pattern);
}

/**
 * Parse `FIRST:LAST[:STEP]` (inclusive, STEP ≥ 1, default 1). A single number selects one frame.
 * @throws RhofieldError (usage) naming `--range` for anything else, or LAST < FIRST.
 */
export function parseFrameRange(text: string, name = '--range'): FrameRange {
  const m = /^\s*(\d+)\s*(?::\s*(\d+)\s*(?::\s*(\d+)\s*)?)?$/.exec(text);
  if (!m) throw invalidParameter(name, 'FIRST:LAST[:STEP] with non-negative integers (inclusive), e.g. 0:199 or 10:50:2', text);
  const first = Number(m[1]);
  const last = m[2] === undefined ? first : Number(m[2]);
  const step = m[3] === undefined ? 1 : Number(m[3]);
  if (last < first) throw invalidParameter(name, 'LAST ≥ FIRST', text, 'swap the two numbers');
  if (step < 1) throw invalidParameter(name, 'a STEP of 1 or more', text);
  return { first, last, step };
}

/** True if frame number `n` is selected by `range` (no range selects everything). */
export function inFrameRange(n: number, range: FrameRange | undefined): boolean {
  if (!range) return true;
  return n >= range.first && n <= range.last && (n - range.first) % range.step === 0;
}

/**
 * Format frame number `n` into a numbered pattern (`frame_%05d.tif`, 12 → `frame_00012.tif`).
 * @throws RhofieldError if the pattern has no `%d` field.
 */
export function formatNumbered(pattern: string, n: number): string {
  const m = NUMBERED.exec(pattern);
  if (!m) throw invalidParameter('frame pattern', 'a pattern with a %d or %05d field', pattern);
  const width = m[2] ? Number(m[2]) : 0;
  const digits = String(n);
  const padded = m[1] === '0' ? digits.padStart(width, '0') : digits.padStart(width, ' ');
  return pattern.slice(0, m.index) + padded + pattern.slice(m.index + m[0].length);
}

function escapeRe(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&');
}

/**
 * A regular expression matching file names of a numbered pattern's last path segment; group 1 is
 * the frame number. `%05d` matches exactly 5 digits (or more, as printf does for larger numbers),
 * `%d` one or more digits.
 */
export function numberedToRegExp(basename: string): RegExp {
  const m = NUMBERED.exec(basename);
  if (!m) throw invalidParameter('frame pattern', 'a pattern with a %d or %05d field', basename);
  const width = m[2] ? Number(m[2]) : 1;
  const num = m[1] === '0' ? `(\\d{${width},})` : `(\\d+)`;
  return new RegExp('^' + escapeRe(basename.slice(0, m.index)) + num + escapeRe(basename.slice(m.index + m[0].length)) + '$');
}

/** Convert a wildcard file-name pattern (`*`, `?`, `[abc]`, `[0-9]`) to an anchored RegExp. */
export function wildcardToRegExp(basename: string): RegExp {
  let re = '^';
  for (let i = 0; i < basename.length; i++) {
    const c = basename[i] as string;
    if (c === '*') re += '[^/]*';
    else if (c === '?') re += '[^/]';
    else if (c === '[') {
      const end = basename.indexOf(']', i + 1);
      if (end < 0) {
        re += '\\[';
        continue;
      }
      let body = basename.slice(i + 1, end);
      if (body.startsWith('!')) body = '^' + body.slice(1);
      re += '[' + body.replace(/\\/g, '\\\\') + ']';
      i = end;
    } else re += escapeRe(c);
  }
  return new RegExp(re + '$');
}

/**
 * Natural order for file names: runs of digits compare as numbers (`f2` before `f10`), then as text.
 * Deterministic (no locale).
 */
export function naturalCompare(a: string, b: string): number {
  const ra = a.match(/\d+|\D+/g) ?? [];
  const rb = b.match(/\d+|\D+/g) ?? [];
  for (let i = 0; i < Math.min(ra.length, rb.length); i++) {
    const x = ra[i] as string;
    const y = rb[i] as string;
    if (x === y) continue;
    const dx = /^\d/.test(x);
    const dy = /^\d/.test(y);
    if (dx && dy) {
      const d = Number(x) - Number(y);
      if (d !== 0) return d;
      return x.length - y.length;
    }
    return x < y ? -1 : 1;
  }
  if (ra.length !== rb.length) return ra.length - rb.length;
  return a < b ? -1 : a > b ? 1 : 0;
}

/**
 * Select the frames of a wildcard or numbered pattern from the file names present in its folder.
 * @param basenamePattern the last path segment of the pattern.
 * @param names the file names present in the folder.
 * @param range optional frame-number range.
 * @returns matches in frame order with their frame numbers.
 */
export function matchFrameNames(
  basenamePattern: string,
  names: readonly string[],
  range?: FrameRange,
): Array<{ name: string; number: number }> {
  if (isNumberedPattern(basenamePattern)) {
    const re = numberedToRegExp(basenamePattern);
    const out: Array<{ name: string; number: number }> = [];
    for (const name of names) {
      const m = re.exec(name);
      if (m) out.push({ name, number: Number(m[1]) });
    }
    out.sort((a, b) => a.number - b.number || naturalCompare(a.name, b.name));
    return out.filter((f) => inFrameRange(f.number, range));
  }
  const re = wildcardToRegExp(basenamePattern);
  return names
    .filter((n) => re.test(n))
    .sort(naturalCompare)
    .map((name, number) => ({ name, number }))
    .filter((f) => inFrameRange(f.number, range));
}

/**
 * A file-system-safe identifier for a frame, used as its result folder name: the file name without
 * extension (characters outside `[A-Za-z0-9._-]` become `_`), with `_p<page>` (5 digits) for pages of
 * a stack.
 */
export function frameId(file: string, page?: number): string {
  const base = file.split(/[\\/]/).pop() ?? file;
  const dot = base.lastIndexOf('.');
  const stem = (dot > 0 ? base.slice(0, dot) : base).replace(/[^A-Za-z0-9._-]/g, '_').replace(/^\.+/, '_');
  return page === undefined ? stem : `${stem}_p${String(page).padStart(5, '0')}`;
}
