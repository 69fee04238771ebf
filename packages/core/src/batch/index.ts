/** Batches and sequences: pairing, frame sequences, sharding, running statistics, manifest hashing. */
export type { NpyArray, NpyDtype } from './npyArray.js';
export { encodeNpy, decodeNpy } from './npyArray.js';
export type { FrameRange } from './frameSequence.js';
export {
  isNumberedPattern,
  isWildcardPattern,
  parseFrameRange,
  inFrameRange,
  formatNumbered,
  numberedToRegExp,
  wildcardToRegExp,
  naturalCompare,
  matchFrameNames,
  frameId,
} from './frameSequence.js';
export type { FrameRef, PairingMode, PairJob } from './pairFrames.js';
export { PAIRING_MODES, pairFrames } from './pairFrames.js';
export type { ShardSpec } from './shardSpec.js';
export { parseShard, shardFromEnv, shardBounds, selectShard } from './shardSpec.js';
export type { RunningStatistics, FieldStatistics } from './runningStatistics.js';
export { createRunningStatistics, addSample, combineStatistics, finalizeStatistics } from './runningStatistics.js';
export { canonicalJson, settingsHash } from './settingsHash.js';
export type { WorkerPool } from './createWorkerPool.js';
export { createWorkerPool } from './createWorkerPool.js';
