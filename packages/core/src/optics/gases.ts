/**
 * Built-in gas table: Gladstone–Dale constant K (n − 1 = K·ρ) and molar mass per gas.
 *
 * K values (except air) are for 589 nm; they come from handbook refractivities at 0 °C, 101 325 Pa
 * divided by the ideal-gas density (refractivities from
 * the Chronological Scientific Tables, National Astronomical Observatory of Japan, 2000). K changes by
 * about 1–2 % across the visible; for air it is computed at the user's wavelength from Ciddor 1996.
 *
 * Molar masses: standard atomic weights (IUPAC/CIAAW, conventional values) summed per formula; dry air
 * 28.9644 g/mol from the U.S. Standard Atmosphere 1976. Specific gas constant R = R_u / M with
 * R_u = 8.314462618 J/(mol·K) (CODATA 2018, exact since the 2019 SI).
 */
import { airGladstoneDale } from './airRefractivity.js';

/** Universal gas constant, J/(mol·K) (CODATA 2018; exact). */
export const UNIVERSAL_GAS_CONSTANT = 8.314462618;

/** One row of the gas table. */
export interface GasProperties {
  /** Name used in setup files. */
  readonly name: string;
  /** Molar mass, kg/mol. */
  readonly molarMass: number;
  /** Gladstone–Dale constant at 589 nm, m³/kg (air: use {@link gasGladstoneDale} for other λ). */
  readonly gladstoneDale589: number;
  /** Where K comes from. */
  readonly source: string;
}

const HANDBOOK = 'refractivity at 589 nm, 0 °C, 101 325 Pa (Chronological Scientific Tables 2000) / ideal-gas density';

const TABLE: readonly GasProperties[] = [
  { name: 'air', molarMass: 28.9644e-3, gladstoneDale589: NaN, source: 'computed at the wavelength: Ciddor 1996, Applied Optics 35:1566, standard-air refractivity / density' },
  { name: 'N2', molarMass: 28.0134e-3, gladstoneDale589: 0.238e-3, source: HANDBOOK + '; cross-checked against AIAA Paper 2003-4252 (0.238)' },
  { name: 'O2', molarMass: 31.9988e-3, gladstoneDale589: 0.19e-3, source: HANDBOOK + '; cross-checked against AIAA Paper 2003-4252 (0.190)' },
  { name: 'Ar', molarMass: 39.948e-3, gladstoneDale589: 0.159e-3, source: HANDBOOK },
  { name: 'CO2', molarMass: 44.0095e-3, gladstoneDale589: 0.229e-3, source: HANDBOOK },
  { name: 'CO', molarMass: 28.0101e-3, gladstoneDale589: 0.267e-3, source: HANDBOOK },
  { name: 'He', molarMass: 4.002602e-3, gladstoneDale589: 0.196e-3, source: HANDBOOK },
  { name: 'H2', molarMass: 2.01588e-3, gladstoneDale589: 1.53e-3, source: HANDBOOK },
  { name: 'Ne', molarMass: 20.1797e-3, gladstoneDale589: 0.074e-3, source: HANDBOOK },
  { name: 'H2O', molarMass: 18.01528e-3, gladstoneDale589: 0.313e-3, source: HANDBOOK + ' (vapour)' },
  { name: 'CH4', molarMass: 16.0425e-3, gladstoneDale589: 0.62e-3, source: 'approximate value recalled from handbook tables (from memory, not verified; about ±3 %)' },
  { name: 'NO', molarMass: 30.0061e-3, gladstoneDale589: 0.221e-3, source: 'AIAA Paper 2003-4252' },
];

const BY_NAME = new Map(TABLE.map((g) => [g.name, g]));

/** Names of the built-in gases, in table order. */
export const KNOWN_GASES: readonly string[] = TABLE.map((g) => g.name);

/** The table row of a gas, or undefined when the name is not in the table (names are case-sensitive). */
export function gasProperties(name: string): GasProperties | undefined {
  return BY_NAME.get(name);
}

/**
 * Gladstone–Dale constant of a built-in gas, m³/kg. Air is computed at `wavelength` from Ciddor 1996;
 * the other gases use their 589 nm value.
 * @param name gas name from {@link KNOWN_GASES}.
 * @param wavelength vacuum wavelength, m.
 * @throws Error when the gas is unknown (callers validate names first).
 */
export function gasGladstoneDale(name: string, wavelength: number): number {
  const g = BY_NAME.get(name);
  if (!g) throw new Error(`unknown gas ${name}`);
  return name === 'air' ? airGladstoneDale(wavelength) : g.gladstoneDale589;
}

/** Specific gas constant R = R_u/M of a built-in gas, J/(kg·K). */
export function gasConstantOf(name: string): number {
  const g = BY_NAME.get(name);
  if (!g) throw new Error(`unknown gas ${name}`);
  return UNIVERSAL_GAS_CONSTANT / g.molarMass;
}
