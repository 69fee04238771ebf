/**
 * Per-point running mean and variance over a sequence of fields, in float64.
 *
 * Samples are added one field at a time with Welford's update (B. P. Welford, "Note on a method for
 * calculating corrected sums of squares and products", Technometrics 4(3):419–420, 1962); partial
 * accumulators of consecutive blocks combine with the pairwise formula of Chan, Golub & LeVeque
 * ("Updating formulae and a pairwise algorithm for computing sample variances", Stanford
 * STAN-CS-79-773, 1979): with δ = mean_b − mean_a, n = n_a + n_b,
 *   mean = mean_a + δ·n_b/n,   M2 = M2_a + M2_b + δ²·n_a·n_b/n.
 * Non-finite samples (NaN: no valid data at that point in that frame) are skipped, so each point keeps
 * its own count of valid samples.
 */
import { invalidParameter } from '../util/errors.js';

/** Accumulator for `length` points: valid-sample count, mean and sum of squared deviations (M2). */
export interface RunningStatistics {
  readonly length: number;
  readonly count: Float64Array;
  readonly mean: Float64Array;
  readonly m2: Float64Array;
}

/** Final per-point statistics. */
export interface FieldStatistics {
  /** Number of valid samples per point. */
  readonly count: Uint32Array;
  /** Mean; NaN where count = 0. */
  readonly mean: Float64Array;
  /** Sample standard deviation (denominator count − 1); NaN where count < 2. */
  readonly std: Float64Array;
}

/** An empty accumulator for `length` points. */
export function createRunningStatistics(length: number): RunningStatistics {
  return { length, count: new Float64Array(length), mean: new Float64Array(length), m2: new Float64Array(length) };
}

/**
 * Add one sample field (in place on `acc`, the accumulator is the explicit `out`).
 * @param values one value per point, any numeric array type; non-finite values are skipped.
 * @throws RhofieldError if the length differs from the accumulator's.
 */
export function addSample(acc: RunningStatistics, values: ArrayLike<number>): void {
  if (values.length !== acc.length) throw invalidParameter('sample field', `${acc.length} values`, `${values.length} values`);
  const { count, mean, m2 } = acc;
  for (let i = 0; i < acc.length; i++) {
    const x = values[i] as number;
    if (!Number.isFinite(x)) continue;
    const n = count[i]! + 1;
    const d = x - mean[i]!;
    const mu = mean[i]! + d / n;
    count[i] = n;
    mean[i] = mu;
    m2[i] = m2[i]! + d * (x - mu);
  }
}

/**
 * Combine two accumulators (a = earlier frames, b = later frames) into a new one.
 * @throws RhofieldError if their lengths differ.
 */
export function combineStatistics(a: RunningStatistics, b: RunningStatistics): RunningStatistics {
  if (a.length !== b.length) throw invalidParameter('partial statistics', `${a.length} points`, `${b.length} points`);
  const out = createRunningStatistics(a.length);
  for (let i = 0; i < a.length; i++) {
    const na = a.count[i]!;
    const nb = b.count[i]!;
    const n = na + nb;
    if (nb === 0) {
      out.count[i] = na;
      out.mean[i] = a.mean[i]!;
      out.m2[i] = a.m2[i]!;
    } else if (na === 0) {
      out.count[i] = nb;
      out.mean[i] = b.mean[i]!;
      out.m2[i] = b.m2[i]!;
    } else {
      const d = b.mean[i]! - a.mean[i]!;
      out.count[i] = n;
      out.mean[i] = a.mean[i]! + (d * nb) / n;
      out.m2[i] = a.m2[i]! + b.m2[i]! + (d * d * na * nb) / n;
    }
  }
  return out;
}

/** Mean, sample standard deviation and counts from an accumulator. */
export function finalizeStatistics(acc: RunningStatistics): FieldStatistics {
  const count = new Uint32Array(acc.length);
  const mean = new Float64Array(acc.length);
  const std = new Float64Array(acc.length);
  for (let i = 0; i < acc.length; i++) {
    const n = acc.count[i]!;
    count[i] = n;
    mean[i] = n > 0 ? acc.mean[i]! : NaN;
    std[i] = n > 1 ? Math.sqrt(Math.max(0, acc.m2[i]!) / (n - 1)) : NaN;
  }
  return { count, mean, std };
}
