/**
 * Is a measured displacement field the result of two images of the same background at all? Two
 * unrelated images (a wrong reference, a frame of another run, two noise images) still give a vector
 * in every window — the highest of many spurious correlation peaks — and after the median test's
 * replacement a smooth-looking but meaningless field. What gives them away is the normalized
 * correlation coefficient at the chosen peak: for images of the same dots it is near 1 wherever the
 * pattern is visible, between unrelated images it stays low everywhere.
 *
 * Rule: the pair is called mismatched when, among the vectors not masked,
 * - fewer than {@link MISMATCH_MAX_STRONG_SHARE} (10 %) have a correlation peak of at least
 *   {@link STRONG_CORRELATION} (0.5), and
 * - at least {@link MISMATCH_MIN_FLAGGED_SHARE} (25 %) were flagged (replaced or failed) by the
 *   normalized median test (Westerweel & Scarano 2005, Exp. Fluids 39:1096) in the last pass.
 * Both must hold; at least {@link MISMATCH_MIN_VECTORS} vectors are needed to judge.
 *
 * Where the numbers come from (this project's own measurements, 256² images, 32 px windows, default
 * three passes; see tests/hostile/pairMismatch.test.ts): unrelated noise images give median peak
 * correlation 0.09, 0 % of vectors ≥ 0.5, 44 % flagged; unrelated dot images 0.24, 0 %, 38 %. The genuine
 * hard cases — an oblique shock smoothed over σ = 3 px, image noise 3 % of the dot peak, a natural
 * (blurred-noise) texture, a strong illumination change across the image — give median 0.88–1.0 and
 * ≥ 99 % of vectors ≥ 0.5. Very noisy genuine pairs lose their clear peaks too (noise 20 % of the dot
 * peak: 0 % ≥ 0.5), and there the median test decides: 12 % flagged at 20 % noise, 20 % at 30 %, against
 * 35–65 % for unrelated pairs. The measureDisplacement documentation reports spurious peaks between
 * unrelated dot images up to 0.55 (99th percentile 0.42), hence a share, not a single window.
 *
 * A mask leaving fewer than {@link MIN_UNMASKED_SHARE} (5 %) of the vectors is reported separately by
 * {@link assessMaskCoverage}: such a field says nothing about the flow (an all-black mask, or an
 * inverted one).
 */
import { VectorStatus, type DisplacementField } from '../correlate/types.js';

/** Correlation coefficient at the peak counted as a clear match (0–1). */
export const STRONG_CORRELATION = 0.5;
/** A pair is mismatched only if fewer than this share of unmasked vectors reach {@link STRONG_CORRELATION}. */
export const MISMATCH_MAX_STRONG_SHARE = 0.1;
/** …and at least this share was flagged by the median test. */
export const MISMATCH_MIN_FLAGGED_SHARE = 0.25;
/** Fewest unmasked vectors for a verdict. */
export const MISMATCH_MIN_VECTORS = 4;
/** Smallest share of vectors a mask may leave. */
export const MIN_UNMASKED_SHARE = 0.05;

/** The numbers behind {@link assessPairMatch}. */
export interface PairMatch {
  /** Vectors not masked. */
  readonly vectors: number;
  /** Share of those with a correlation peak ≥ {@link STRONG_CORRELATION}. */
  readonly strongShare: number;
  /** Share of those flagged (replaced or failed) by the median test. */
  readonly flaggedShare: number;
  /** Median correlation coefficient at the peak (NaN if none). */
  readonly medianCorrelation: number;
  /** True when the two images do not show the same pattern (see the module comment). */
  readonly mismatched: boolean;
  /** One plain-language sentence with the numbers. */
  readonly reason: string;
}

/**
 * Judge whether the two images of a measured pair show the same background.
 * @param d a displacement field (status, correlation of the final pass).
 * @returns the {@link PairMatch}; `mismatched` is false when there are too few vectors to judge.
 */
export function assessPairMatch(d: Pick<DisplacementField, 'status' | 'correlation'>): PairMatch {
  const n = d.status.length;
  const cs: number[] = [];
  let used = 0;
  let strong = 0;
  let flagged = 0;
  for (let i = 0; i < n; i++) {
    const st = d.status[i];
    if (st === VectorStatus.masked) continue;
    used++;
    if (st === VectorStatus.replaced || st === VectorStatus.failed) flagged++;
    const c = d.correlation.data[i]!;
    if (Number.isFinite(c)) {
      cs.push(c);
      if (c >= STRONG_CORRELATION) strong++;
    }
  }
  cs.sort((a, b) => a - b);
  const median = cs.length ? (cs.length % 2 ? cs[(cs.length - 1) / 2]! : (cs[cs.length / 2 - 1]! + cs[cs.length / 2]!) / 2) : NaN;
  const strongShare = used ? strong / used : 0;
  const flaggedShare = used ? flagged / used : 0;
  const mismatched = used >= MISMATCH_MIN_VECTORS && strongShare < MISMATCH_MAX_STRONG_SHARE && flaggedShare >= MISMATCH_MIN_FLAGGED_SHARE;
  const pc = (v: number) => `${(100 * v).toFixed(0)} %`;
  const reason = `${pc(strongShare)} of ${used} vectors have a clear correlation peak (≥ ${STRONG_CORRELATION}; median ${Number.isFinite(median) ? median.toFixed(2) : 'n/a'}) and the median test flagged ${pc(flaggedShare)}`;
  return { vectors: used, strongShare, flaggedShare, medianCorrelation: median, mismatched, reason };
}

/** The numbers behind {@link assessMaskCoverage}. */
export interface MaskCoverage {
  readonly vectors: number;
  readonly unmasked: number;
  readonly share: number;
  /** True when fewer than {@link MIN_UNMASKED_SHARE} of the vectors are left. */
  readonly tooLittle: boolean;
}

/** Share of the vector grid a mask leaves (status ≠ masked). */
export function assessMaskCoverage(d: Pick<DisplacementField, 'status'>): MaskCoverage {
  let unmasked = 0;
  for (let i = 0; i < d.status.length; i++) if (d.status[i] !== VectorStatus.masked) unmasked++;
  const share = d.status.length ? unmasked / d.status.length : 0;
  return { vectors: d.status.length, unmasked, share, tooLittle: share < MIN_UNMASKED_SHARE };
}
