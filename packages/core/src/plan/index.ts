export type { PlanSetupInput, PlanCamera, PlanGeometry, PlanFlow, PlanExpected } from './types.js';
export type { PlanOptions, PlanVerdict, SetupPlan } from './planSetup.js';
export { planSetup, flowToBackgroundForGain } from './planSetup.js';
export { formatPlan } from './formatPlan.js';
export type { DotSizeInput, DotSizeAdvice } from './recommendDotDiameter.js';
export { recommendDotDiameter } from './recommendDotDiameter.js';
export { discBlur } from './discBlur.js';
export type { SimulationFieldKind, SimulationEngines, SimulateOptions, SimulationErrors, SimulationResult } from './simulateSetup.js';
export { simulateSetup, SIMULATION_FIELD_KINDS } from './simulateSetup.js';
