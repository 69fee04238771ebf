/**
 * Check a reference/measurement pair: each image alone ({@link diagnoseImage}), the global shift
 * (did the camera move?), the brightness change and, when a displacement field is supplied (from a
 * single correlation pass), the fraction of windows with a weak correlation peak.
 */
import type { Field } from '../util/field.js';
import { invalidParameter } from '../util/errors.js';
import type { DisplacementField } from '../correlate/types.js';
import { diagnoseImage, type DiagnoseOptions, type Finding, type ImageDiagnosis } from './diagnoseImage.js';
import { globalShift, type GlobalShift } from './globalShift.js';
import { assessPairMatch, type PairMatch } from './pairMismatch.js';

/** Options of {@link diagnosePair}. */
export interface DiagnosePairOptions extends DiagnoseOptions {
  /** A single-pass displacement field of the pair, for the weak-peak fraction (optional). */
  readonly displacement?: DisplacementField;
  /** Peak ratio below which a window counts as weak (default 1.5, common practice). */
  readonly weakPeakRatio?: number;
  /** Global shift above which the camera is said to have moved, px (default 0.1). */
  readonly shiftTolerancePx?: number;
}

/** Result of {@link diagnosePair}. */
export interface PairDiagnosis {
  readonly reference: ImageDiagnosis;
  readonly measurement: ImageDiagnosis;
  readonly shift: GlobalShift;
  /** Mean intensity of the measurement over that of the reference. */
  readonly brightnessRatio: number;
  /** Fraction of windows with peak ratio < weakPeakRatio or no peak; null without a displacement field. */
  readonly weakPeakFraction: number | null;
  /** Do the images show the same background? null without a displacement field. */
  readonly match: PairMatch | null;
  readonly usable: boolean;
  /** Pair findings (the per-image findings are in reference/measurement). */
  readonly findings: readonly Finding[];
}

/**
 * @param ref reference image; @param meas measurement image (same size).
 * @throws RhofieldError (usage) when the sizes differ.
 */
export function diagnosePair(ref: Field, meas: Field, opts: DiagnosePairOptions = {}): PairDiagnosis {
  if (ref.width !== meas.width || ref.height !== meas.height) {
    throw invalidParameter('measurement image size', `${ref.width} × ${ref.height} px (the reference size)`, `${meas.width} × ${meas.height}`);
  }
  const reference = diagnoseImage(ref, opts);
  const measurement = diagnoseImage(meas, opts);
  const shift = globalShift(ref, meas);
  const brightnessRatio = measurement.mean / reference.mean;
  const tol = opts.shiftTolerancePx ?? 0.1;
  const F: Finding[] = [];
  const mag = Math.hypot(shift.dxPx, shift.dyPx);
  F.push(
    shift.peak < 0.2
      ? { key: 'shift', level: 'unusable', message: `the images hardly correlate (peak ${shift.peak.toFixed(2)}): different scene, large motion or heavy blur`, advice: 'check that both images show the same background through the same camera setup' }
      : mag > tol
        ? { key: 'shift', level: 'warning', message: `global shift (${shift.dxPx.toFixed(2)}, ${shift.dyPx.toFixed(2)}) px between the images: the camera or background may have moved (the flow also contributes)`, advice: 'fix the camera more rigidly, or use a flow-free region to correct the shift' }
        : { key: 'shift', level: 'ok', message: `global shift (${shift.dxPx.toFixed(2)}, ${shift.dyPx.toFixed(2)}) px, correlation ${shift.peak.toFixed(2)}`, advice: 'camera steady' },
  );
  if (Math.abs(brightnessRatio - 1) > 0.1) {
    F.push({ key: 'contrast', level: 'warning', message: `brightness differs by ${(100 * (brightnessRatio - 1)).toFixed(0)} % between the images`, advice: 'flame light, lamp flicker or auto-exposure: use fixed exposure and normalise the intensity locally' });
  }
  let weak: number | null = null;
  if (opts.displacement) {
    const d = opts.displacement;
    const thr = opts.weakPeakRatio ?? 1.5;
    let n = 0;
    let w = 0;
    for (let i = 0; i < d.peakRatio.data.length; i++) {
      if (d.status[i] === 2) continue; // masked
      n++;
      const pr = d.peakRatio.data[i]!;
      if (!(pr >= thr)) w++;
    }
    weak = n ? w / n : null;
    if (weak !== null) {
      F.push(
        weak > 0.5
          ? { key: 'correlation', level: 'unusable', message: `${(100 * weak).toFixed(0)} % of windows have a weak correlation peak`, advice: 'larger windows, better focus or less blur; check for large displacements beyond the window' }
          : weak > 0.1
            ? { key: 'correlation', level: 'warning', message: `${(100 * weak).toFixed(0)} % of windows have a weak correlation peak`, advice: 'use larger windows or more passes; check the dot density and focus' }
            : { key: 'correlation', level: 'ok', message: `${(100 * weak).toFixed(1)} % of windows have a weak correlation peak`, advice: 'fine' },
      );
    }
  }
  const match = opts.displacement ? assessPairMatch(opts.displacement) : null;
  if (match?.mismatched) {
    F.push({ key: 'match', level: 'unusable', message: `the images do not show the same background: ${match.reason}`, advice: 'check that the reference belongs to this measurement (same camera, same background, same run)' });
  }
  const usable = reference.usable && measurement.usable && !F.some((f) => f.level === 'unusable');
  return { reference, measurement, shift, brightnessRatio, weakPeakFraction: weak, match, usable, findings: F };
}
