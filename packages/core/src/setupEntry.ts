/**
 * `@rhofield/core/setup`: the setup file and the setup planner alone — no image, FFT, worker or HDF5
 * dependencies, so it loads in a few milliseconds (the CLI's `plan` and its start-up use it). The
 * same functions are exported from `@rhofield/core`; both entries share one module instance.
 * @packageDocumentation
 */
export type { ErrorKind } from './util/errors.js';
export { RhofieldError, invalidParameter, inputError } from './util/errors.js';
export { VERSION } from './util/version.js';
export type { Setup, FlowSpec } from './setup/schema.js';
export { setupSchema } from './setup/schema.js';
export { parseSetup, loadSetup, setupWarnings } from './setup/parseSetup.js';
export type { PlanSetupInput, PlanCamera, PlanGeometry, PlanFlow, PlanExpected } from './plan/types.js';
export type { PlanOptions, PlanVerdict, SetupPlan } from './plan/planSetup.js';
export { planSetup, flowToBackgroundForGain } from './plan/planSetup.js';
export { formatPlan } from './plan/formatPlan.js';
export type { DotSizeInput, DotSizeAdvice } from './plan/recommendDotDiameter.js';
export { recommendDotDiameter } from './plan/recommendDotDiameter.js';
