/**
 * Optical and thermodynamic constants of the setup's medium: a single gas, a given K, or a mixture
 * by mass fraction.
 *
 * Mixtures: `K_mix = Σ Yᵢ Kᵢ` (refractivities of dilute gases add; Merzkirch, Flow Visualization,
 * 2nd ed., 1987) and `R_mix = Σ Yᵢ Rᵢ` (ideal-gas mixture, Dalton's law), with mass fractions Yᵢ.
 */
import { gasConstantOf, gasGladstoneDale } from './gases.js';

/** The medium part of a setup (see the setup schema). */
export interface MediumSpec {
  readonly gas?: string | undefined;
  readonly gladstoneDale?: number | undefined;
  readonly mixture?: Readonly<Record<string, number>> | undefined;
  readonly wavelength: number;
  readonly referenceDensity: number;
  readonly pressure?: number | undefined;
}

/** Constants derived from a medium. */
export interface MediumConstants {
  /** Gladstone–Dale constant at the setup wavelength, m³/kg. */
  readonly gladstoneDale: number;
  /** Specific gas constant, J/(kg·K); null when the medium is given only by its K. */
  readonly gasConstant: number | null;
  /** Refractive index of the undisturbed medium, `n0 = 1 + K·ρ_ref`. */
  readonly n0: number;
  /** One-line description, e.g. "air (K at 532 nm from Ciddor 1996)". */
  readonly description: string;
}

/**
 * K, R and n0 of a (validated) medium.
 * @param m medium with exactly one of gas / gladstoneDale / mixture (validated by parseSetup).
 */
export function mediumConstants(m: MediumSpec): MediumConstants {
  let k: number;
  let r: number | null;
  let description: string;
  if (m.gas !== undefined) {
    k = gasGladstoneDale(m.gas, m.wavelength);
    r = gasConstantOf(m.gas);
    description = m.gas === 'air' ? `air (K at ${(m.wavelength * 1e9).toFixed(1)} nm from Ciddor 1996)` : `${m.gas} (K at 589 nm)`;
  } else if (m.mixture !== undefined) {
    k = 0;
    r = 0;
    const parts: string[] = [];
    for (const [name, y] of Object.entries(m.mixture)) {
      k += y * gasGladstoneDale(name, m.wavelength);
      r += y * gasConstantOf(name);
      parts.push(`${name} ${y}`);
    }
    description = `mixture by mass (${parts.join(', ')})`;
  } else if (m.gladstoneDale !== undefined) {
    k = m.gladstoneDale;
    r = null;
    description = `gas with K = ${m.gladstoneDale} m³/kg`;
  } else {
    throw new Error('medium needs one of gas, gladstoneDale or mixture');
  }
  return { gladstoneDale: k, gasConstant: r, n0: 1 + k * m.referenceDensity, description };
}
