/**
 * Refractivity (n − 1) of dry air from published dispersion formulas.
 * Wavelengths are vacuum wavelengths in metres; σ = 1/λ in µm⁻¹ inside the formulas.
 */

function sigma2(wavelength: number): number {
  const s = 1e-6 / wavelength; // µm⁻¹
  return s * s;
}

/**
 * Ciddor 1996 dispersion of standard air (15 °C, 101 325 Pa, dry, 450 ppm CO₂):
 * `n − 1 = 0.05792105/(238.0185 − σ²) + 0.00167917/(57.362 − σ²)`.
 * @param wavelength vacuum wavelength, m (valid about 0.3–1.7 µm).
 * @returns n − 1 of standard air.
 * @see Ciddor, P. E. (1996). Refractive index of air: new equations for the visible and near
 *   infrared. Applied Optics 35(9):1566–1573. doi:10.1364/AO.35.001566
 */
export function airRefractivityCiddorStandard(wavelength: number): number {
  const s2 = sigma2(wavelength);
  return 0.05792105 / (238.0185 - s2) + 0.00167917 / (57.362 - s2);
}

/**
 * Edlén 1966 dispersion of standard air (15 °C, 101 325 Pa, dry, 300 ppm CO₂):
 * `(n − 1)·10⁸ = 8342.13 + 2 406 030/(130 − σ²) + 15 997/(38.9 − σ²)`.
 * @see Edlén, B. (1966). The refractive index of air. Metrologia 2:71–80.
 */
export function airRefractivityEdlen1966Standard(wavelength: number): number {
  const s2 = sigma2(wavelength);
  return (8342.13 + 2406030 / (130 - s2) + 15997 / (38.9 - s2)) * 1e-8;
}

/**
 * Modified Edlén equation for dry air at temperature and pressure:
 * `(n−1)_s = [8342.54 + 2 406 147/(130 − σ²) + 15 998/(38.9 − σ²)]·10⁻⁸`,
 * `(n−1)_tp = p·(n−1)_s·X / 96 095.43`, `X = [1 + 10⁻⁸(0.601 − 0.00972 t)p] / (1 + 0.003661 t)`.
 * @param wavelength vacuum wavelength, m.
 * @param temperature K (converted to t in °C).
 * @param pressure Pa.
 * @see Birch, K. P. & Downs, M. J. (1993). An updated Edlén equation for the refractive index of
 *   air. Metrologia 30:155–162; correction, Metrologia 31:315–316 (1994).
 */
export function airRefractivityBirchDowns(wavelength: number, temperature = 288.15, pressure = 101325): number {
  const s2 = sigma2(wavelength);
  const ns = (8342.54 + 2406147 / (130 - s2) + 15998 / (38.9 - s2)) * 1e-8;
  const t = temperature - 273.15;
  const x = (1 + 1e-8 * (0.601 - 0.00972 * t) * pressure) / (1 + 0.003661 * t);
  return (pressure * ns * x) / 96095.43;
}

/**
 * Density of Ciddor's standard air (15 °C, 101 325 Pa, dry, 450 ppm CO₂), kg/m³, from
 * `ρ = p·M_a/(Z·R·T)` with `M_a = 10⁻³[28.9635 + 12.011·10⁻⁶(x_c − 400)]` kg/mol (Ciddor 1996) and
 * the compressibility `Z = 1 − (p/T)(a0 + a1 t + a2 t²) + (p/T)² d` of the CIPM-81/91 air-density
 * equation (Davis, R. S. (1992). Equation for the determination of the density of moist air
 * (1981/91). Metrologia 29:67–70), dry air. About 1.22546 kg/m³.
 */
export function standardAirDensityCiddor(): number {
  const p = 101325;
  const T = 288.15;
  const t = 15;
  const ma = 1e-3 * (28.9635 + 12.011e-6 * (450 - 400));
  const a0 = 1.58123e-6;
  const a1 = -2.9331e-8;
  const a2 = 1.1043e-10;
  const d = 1.83e-11;
  const z = 1 - (p / T) * (a0 + a1 * t + a2 * t * t) + (p / T) ** 2 * d;
  return (p * ma) / (z * 8.314462618 * T);
}

/**
 * Gladstone–Dale constant of dry air at a wavelength: Ciddor 1996 standard-air refractivity divided
 * by the standard-air density ({@link standardAirDensityCiddor}). K varies with T and p by < 10⁻⁴
 * relative, so this value serves all room conditions.
 * @param wavelength vacuum wavelength, m.
 * @returns K, m³/kg (≈ 2.27·10⁻⁴ at 532 nm).
 */
export function airGladstoneDale(wavelength: number): number {
  return airRefractivityCiddorStandard(wavelength) / standardAirDensityCiddor();
}
