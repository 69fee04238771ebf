/**
 * Turn a `--frames` / `--reference` argument into a list of frames: a numbered pattern
 * (`frame_%05d.tif`), a wildcard pattern (`shots/*.png`), a multi-page TIFF stack, or one file.
 */
import { promises as fsp } from 'node:fs';
import path from 'node:path';
import {
  formatNumbered,
  inFrameRange,
  inputError,
  isNumberedPattern,
  isWildcardPattern,
  matchFrameNames,
  type FrameRange,
  type FrameRef,
} from '@rhofield/core';
import type { ProbeFn } from './types.js';

/** How an argument was read. */
export type FrameSourceKind = 'numbered' | 'wildcard' | 'stack' | 'file';

export interface ResolvedFrames {
  readonly kind: FrameSourceKind;
  readonly frames: FrameRef[];
  /** Files a numbered pattern and --range name that are not present (reported as a warning). */
  readonly missing: string[];
}

/**
 * Resolve a frame argument.
 * @param label option name used in messages (`--frames`, `--reference`).
 * @param spec the argument.
 * @param range optional frame-number range (numbers of `%d` fields, stack pages, or positions in a
 *   wildcard match list).
 * @param probe image header reader (page count of stacks).
 * @param allowSingle accept one single-page file (a reference); `--frames` needs a sequence or stack.
 * @throws RhofieldError (input) if nothing matches, the folder is missing, or a stack has one page.
 */
export async function resolveFrames(label: string, spec: string, range: FrameRange | undefined, probe: ProbeFn, allowSingle: boolean): Promise<ResolvedFrames> {
  const dir = path.dirname(spec);
  const base = path.basename(spec);
  if (isNumberedPattern(base) || isWildcardPattern(base)) {
    if (isWildcardPattern(dir) || isNumberedPattern(dir)) {
      throw inputError(`${label} ${spec}: wildcards and %d fields are allowed in the file name only, not in the folder ${dir}`);
    }
    let names: string[];
    try {
      names = await fsp.readdir(dir);
    } catch (e) {
      throw inputError(`${label} ${spec}: folder ${dir} ${(e as NodeJS.ErrnoException).code === 'ENOENT' ? 'does not exist' : 'cannot be read'}; check the path`);
    }
    const matched = matchFrameNames(base, names, range);
    if (matched.length === 0) {
      throw inputError(
        `${label} pattern ${spec} matches no files in ${dir}${range ? ` within --range ${range.first}:${range.last}:${range.step}` : ''}; check the pattern (quote it so the shell does not expand it)`,
      );
    }
    const frames = matched.map((m) => ({ path: path.join(dir, m.name), number: m.number }));
    const missing: string[] = [];
    if (isNumberedPattern(base) && range) {
      const have = new Set(matched.map((m) => m.number));
      for (let n = range.first; n <= range.last; n += range.step) if (!have.has(n) && inFrameRange(n, range)) missing.push(formatNumbered(spec, n));
    }
    return { kind: isNumberedPattern(base) ? 'numbered' : 'wildcard', frames, missing };
  }
  const info = await probe(spec);
  if (info.pages > 1) {
    const frames: FrameRef[] = [];
    for (let p = 0; p < info.pages; p++) if (inFrameRange(p, range)) frames.push({ path: spec, page: p, number: p });
    if (frames.length === 0) throw inputError(`${label} stack ${spec} has ${info.pages} pages but --range selects none of them (pages count from 0)`);
    return { kind: 'stack', frames, missing: [] };
  }
  if (!allowSingle) {
    throw inputError(
      `${label} ${spec} is a single image (a stack with one page), not a sequence; give a numbered pattern (frame_%05d.tif), a quoted wildcard pattern ("shots/*.png") or a multi-page TIFF`,
    );
  }
  return { kind: 'file', frames: [{ path: spec, number: 0 }], missing: [] };
}
