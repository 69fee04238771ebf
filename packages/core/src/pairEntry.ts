/**
 * `@rhofield/core/pair`: what measuring one image pair and writing its displacement files needs —
 * image loading, the displacement measurement and its engine, the pair checks, the field-set writers
 * — without the modules of setups, planning, reconstruction, views and synthesis (about a third of
 * the library's load time). The `rhofield displacement` command loads only this; density work adds
 * `@rhofield/core/setup` and `@rhofield/core/reconstruct`. Everything here is also exported by
 * `@rhofield/core`.
 * @packageDocumentation
 */
export type { ErrorKind } from './util/errors.js';
export { RhofieldError, invalidParameter, inputError } from './util/errors.js';
export { VERSION } from './util/version.js';
export type { Field, MaskField } from './util/field.js';
export { formatBytes, parseByteSize } from './util/byteSize.js';
export { loadImage, loadImageInfo, MAX_IMAGE_PIXELS } from './image/loadImage.js';
export type { ImageFormat, ImageInfo, LoadedImage, LoadImageOptions } from './image/loadImage.js';
export { loadMask } from './image/loadMask.js';
export type { LoadMaskOptions } from './image/loadMask.js';
export { assessPairMatch, assessMaskCoverage, MIN_UNMASKED_SHARE } from './diagnose/pairMismatch.js';
export type { DisplacementField, VectorGrid, VectorStatusCode } from './correlate/types.js';
export { VectorStatus, VECTOR_STATUS_NAMES } from './correlate/types.js';
export type { MeasureDisplacementOptions, DisplacementResult, DisplacementSettings, PassReport } from './correlate/measureDisplacement.js';
export { measureDisplacement } from './correlate/measureDisplacement.js';
export { describeSchedule } from './correlate/schedule.js';
export { createDisplacementEngine, DisplacementEngine } from './correlate/displacementEngine.js';
export type { DisplacementEngineOptions } from './correlate/displacementEngine.js';
export { availableCores, capThreads } from './correlate/capThreads.js';
export type { MemoryEstimate, MemoryEstimateInput } from './correlate/estimateMemory.js';
export { WORKER_THREAD_BYTES, estimateMemory } from './correlate/estimateMemory.js';
export type { KernelStatus } from './correlate/simdKernels.js';
export { kernelStatus } from './correlate/simdKernels.js';
export type { PixelMapping } from './optics/pixelMapping.js';
export { pixelMapping } from './optics/pixelMapping.js';
export type { FieldSet } from './io/fieldSet.js';
export type { FieldSetFormat } from './io/writeFieldSet.js';
export { parseFormats, writeFieldSet } from './io/writeFieldSet.js';
export { fieldToNpy } from './io/writeNpy.js';
export { displacementFieldSet, densityFieldSet } from './io/resultFieldSets.js';
