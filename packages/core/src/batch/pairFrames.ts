/**
 * Pairing rules of a batch: which reference image each measured frame is compared with.
 *
 * - `single`: one reference image for every frame (the most common case: a still background
 *   photographed once before the flow starts);
 * - `per-frame`: a reference per frame, matched by frame number (numbered patterns, stack pages) or
 *   by position in frame order (wildcard patterns);
 * - `consecutive`: each frame against the one before it (frame i is the reference of frame i+1), which
 *   measures the change between successive instants.
 */
import { inputError, invalidParameter } from '../util/errors.js';
import { frameId } from './frameSequence.js';

/** One image of a sequence: a file, or one page of a multi-page file. */
export interface FrameRef {
  readonly path: string;
  /** 0-based page for multi-page stacks; absent for single-image files. */
  readonly page?: number;
  /** Frame number (see frameSequence). */
  readonly number: number;
}

/** The pairing rules. */
export type PairingMode = 'single' | 'per-frame' | 'consecutive';
export const PAIRING_MODES: readonly PairingMode[] = ['single', 'per-frame', 'consecutive'];

/** One unit of batch work: a reference/measured image pair and the id of its result folder. */
export interface PairJob {
  /** Result folder name, unique within the batch (from the measured frame). */
  readonly id: string;
  /** Position in frame order (0-based), the order statistics are accumulated in. */
  readonly index: number;
  readonly refPath: string;
  readonly refPage?: number;
  readonly measPath: string;
  readonly measPage?: number;
}

function job(index: number, ref: FrameRef, meas: FrameRef): PairJob {
  return {
    id: frameId(meas.path, meas.page),
    index,
    refPath: ref.path,
    ...(ref.page !== undefined ? { refPage: ref.page } : {}),
    measPath: meas.path,
    ...(meas.page !== undefined ? { measPage: meas.page } : {}),
  };
}

/**
 * Build the pair jobs of a batch in frame order.
 * @param mode pairing rule.
 * @param frames measured frames in frame order.
 * @param references `single`: exactly one; `per-frame`: one per frame; `consecutive`: none.
 * @throws RhofieldError (usage/input) for a wrong number of references, unmatched frame numbers,
 *   too few frames, or two frames mapping to the same result id.
 */
export function pairFrames(mode: PairingMode, frames: readonly FrameRef[], references: readonly FrameRef[] = []): PairJob[] {
  if (!PAIRING_MODES.includes(mode)) throw invalidParameter('--pairing', `one of ${PAIRING_MODES.join(', ')}`, mode);
  let jobs: PairJob[];
  if (mode === 'single') {
    const ref = references[0];
    if (references.length !== 1 || !ref) {
      throw invalidParameter('--reference', 'exactly one reference image for --pairing single', `${references.length} images`, 'give one file, or use --pairing per-frame');
    }
    if (frames.length < 1) throw inputError('--frames selects no frames; check the pattern and --range');
    jobs = frames.map((f, i) => job(i, ref, f));
  } else if (mode === 'per-frame') {
    const byNumber = new Map<number, FrameRef>();
    for (const r of references) byNumber.set(r.number, r);
    const numbered = references.length > 0 && frames.every((f) => byNumber.has(f.number));
    if (!numbered && references.length !== frames.length) {
      throw inputError(
        `--pairing per-frame: ${frames.length} frames but ${references.length} references, and their frame numbers do not match; give one reference per frame`,
      );
    }
    jobs = frames.map((f, i) => job(i, numbered ? (byNumber.get(f.number) as FrameRef) : (references[i] as FrameRef), f));
  } else {
    if (references.length > 0) throw invalidParameter('--reference', 'no reference with --pairing consecutive', `${references.length} images`, 'drop --reference');
    if (frames.length < 2) throw inputError(`--pairing consecutive needs at least 2 frames but --frames selects ${frames.length}`);
    jobs = [];
    for (let i = 1; i < frames.length; i++) jobs.push(job(i - 1, frames[i - 1] as FrameRef, frames[i] as FrameRef));
  }
  const seen = new Map<string, PairJob>();
  for (const j of jobs) {
    const prev = seen.get(j.id);
    if (prev) throw inputError(`frames ${prev.measPath} and ${j.measPath} map to the same result folder "${j.id}"; rename one of them`);
    seen.set(j.id, j);
  }
  return jobs;
}
