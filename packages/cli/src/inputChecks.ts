/**
 * Input checks of the pair pipeline that need the user's file names: images without texture, a mask
 * that leaves (almost) nothing, a pair whose two images do not show the same background. Kept apart
 * from pipeline.ts so that the pipeline only calls them.
 */
import { assessMaskCoverage, assessPairMatch, inputError, MIN_UNMASKED_SHARE, RhofieldError, setupWarnings, type DisplacementResult, type Field, type Setup } from '@rhofield/core';

/** The option that keeps the result of a pair the mismatch check refuses. */
export const ACCEPT_MISMATCH_OPTION = '--accept-mismatch';

/** Refuse an image whose grey values do not vary (blank frame, lens cap, wrong exposure), naming it. */
function requireTexture(label: string, file: string, f: Field): void {
  const d = f.data;
  let mean = 0;
  for (let i = 0; i < d.length; i++) mean += d[i]!;
  mean /= d.length;
  let v = 0;
  for (let i = 0; i < d.length; i++) v += (d[i]! - mean) * (d[i]! - mean);
  const sd = Math.sqrt(v / d.length);
  if (!(sd > 1e-6 * Math.max(1, Math.abs(mean)))) {
    throw inputError(`${label} ${file} has no texture (every pixel ${+mean.toPrecision(6)}); check the file and the exposure`);
  }
}

/** Checks between loading and measuring. */
export function checkLoadedPair(ref: Field, meas: Field, refPath: string, measPath: string): void {
  requireTexture('reference', refPath, ref);
  requireTexture('measurement', measPath, meas);
}

/**
 * Checks after measuring: refuse a mask that leaves fewer than 5 % of the vectors, and a pair whose
 * images do not match unless `acceptMismatch`. Returns warnings for result.json (a kept mismatch, the
 * setup's warnings).
 */
export function checkMeasuredPair(
  disp: DisplacementResult,
  files: { refPath: string; measPath: string; maskPath?: string | undefined; setupPath?: string | undefined },
  opts: { acceptMismatch?: boolean | undefined; setup?: Setup | null | undefined; width: number; height: number },
): string[] {
  const warnings: string[] = [];
  if (files.maskPath) {
    const c = assessMaskCoverage(disp);
    if (c.tooLittle) {
      throw inputError(
        `mask ${files.maskPath} leaves ${c.unmasked} of ${c.vectors} vectors (${(100 * c.share).toFixed(1)} %), fewer than the ${100 * MIN_UNMASKED_SHARE} % a field needs; non-zero mask pixels are used, paint only the parts to ignore black`,
      );
    }
  }
  const m = assessPairMatch(disp);
  if (m.mismatched) {
    const what = `${files.measPath} does not match the reference ${files.refPath}: ${m.reason}`;
    if (!opts.acceptMismatch) throw inputError(`${what}; check that both images show the same background, or pass ${ACCEPT_MISMATCH_OPTION} to keep the result`);
    warnings.push(`${what}; kept because of ${ACCEPT_MISMATCH_OPTION}`);
  }
  if (opts.setup) for (const w of setupWarnings(opts.setup, files.setupPath ?? 'setup', { width: opts.width, height: opts.height })) warnings.push(w);
  return warnings;
}

export { withSetupFile } from './setupErrors.js';
