/**
 * Input checks of the pair pipeline that need the user's file names: a mask that leaves (almost)
 * nothing, a pair whose two images do not show the same background. Kept apart from pipeline.ts so
 * that the pipeline only calls them. (Images without texture are refused by the measurement itself,
 * which names the files: one pass over the pixels instead of two.)
 */
import { assessMaskCoverage, assessPairMatch, inputError, MIN_UNMASKED_SHARE, type DisplacementResult } from '@rhofield/core/pair';
import type { Setup } from '@rhofield/core/setup';

/** The option that keeps the result of a pair the mismatch check refuses. */
export const ACCEPT_MISMATCH_OPTION = '--accept-mismatch';

/**
 * Checks after measuring: refuse a mask that leaves fewer than 5 % of the vectors, and a pair whose
 * images do not match unless `acceptMismatch`. Returns warnings for result.json (a kept mismatch, the
 * setup's warnings; the setup module loads only when there is a setup).
 */
export async function checkMeasuredPair(
  disp: DisplacementResult,
  files: { refPath: string; measPath: string; maskPath?: string | undefined; setupPath?: string | undefined },
  opts: { acceptMismatch?: boolean | undefined; setup?: Setup | null | undefined; width: number; height: number },
): Promise<string[]> {
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
  if (opts.setup) {
    const { setupWarnings } = await import('@rhofield/core/setup');
    for (const w of setupWarnings(opts.setup, files.setupPath ?? 'setup', { width: opts.width, height: opts.height })) warnings.push(w);
  }
  return warnings;
}

export { withSetupFile } from './setupErrors.js';
