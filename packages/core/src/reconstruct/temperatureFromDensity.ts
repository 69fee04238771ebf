/**
 * Temperature from density by the ideal-gas law at constant pressure, T = p / (ρ·R).
 */
import type { Field } from '../util/field.js';

/** The note every temperature output carries. */
export const TEMPERATURE_NOTE =
  'temperature T = p/(ρR) assumes constant pressure (the given medium.pressure) and constant composition (the medium\'s K and R); where fuel or combustion products change the gas, K and R change too and T is biased';

/**
 * @param rho density field, kg/m³ (NaN passes through).
 * @param pressure absolute pressure, Pa. @param gasConstant specific gas constant R, J/(kg·K).
 * @returns temperature field, K.
 */
export function temperatureFromDensity(rho: Field, pressure: number, gasConstant: number): Field {
  const out = new Float32Array(rho.data.length);
  const c = pressure / gasConstant;
  for (let i = 0; i < out.length; i++) out[i] = c / rho.data[i]!;
  return { width: rho.width, height: rho.height, data: out };
}
