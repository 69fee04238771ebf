/**
 * Axisymmetric density from the deflection normal to the axis, per line (row for a vertical axis,
 * column for a horizontal one), by the deflection-form Abel inversion ({@link abelInvertDeflection}).
 *
 * Halves: the outward deflection of the two sides is resampled at r_j = jΔ (Δ = grid step) by linear
 * interpolation and AVERAGED where both sides have data (one side alone where only it has data); the
 * averaged profile is inverted once and mapped back to every grid point at its |distance| to the axis,
 * so the result is mirror-symmetric about the axis. A gap (masked model) stops the inversion from the
 * outer edge inward: NaN inside it. Far-field density (beyond the last sample) = referenceDensity.
 */
import { abelInvertDeflection } from './abelDeflection.js';

/**
 * Value of samples v[off + i·stride], i = 0…len−1, at fractional index u (0 ≤ u ≤ len − 1): cubic
 * convolution (Keys, R. (1981). Cubic convolution interpolation for digital image processing. IEEE
 * Trans. ASSP 29(6):1153–1160, a = −0.5) where four finite neighbours exist, linear otherwise.
 */
function interp(v: ArrayLike<number>, off: number, stride: number, len: number, u: number): number {
  if (len === 1) return v[off]!;
  const i = Math.min(Math.floor(u), len - 2);
  const t = u - i;
  const a = v[off + i * stride]!;
  if (t === 0) return a;
  const b = v[off + (i + 1) * stride]!;
  if (i >= 1 && i + 2 < len) {
    const m = v[off + (i - 1) * stride]!;
    const c = v[off + (i + 2) * stride]!;
    if (Number.isFinite(m) && Number.isFinite(c) && Number.isFinite(a) && Number.isFinite(b)) {
      return a + 0.5 * t * (b - m + t * (2 * m - 5 * a + 4 * b - c + t * (3 * (a - b) + c - m)));
    }
  }
  return a + (b - a) * t;
}

/**
 * @param normal deflection normal to the axis, rad, `lines × samples` row-major, positive toward
 *   larger sample position; NaN = no data.
 * @param positionsPx sample positions along a line, px (uniform step).
 * @param axisPx axis position on that coordinate, px.
 * @param nInf refractive index far from the axis; @param k Gladstone–Dale constant, m³/kg.
 * @param referenceDensity far-field density, kg/m³.
 * @returns density per sample (`lines × samples`), and each sample's distance to the axis in px.
 */
export function axisymmetricDensity(
  normal: ArrayLike<number>,
  samples: number,
  lines: number,
  positionsPx: ArrayLike<number>,
  axisPx: number,
  nInf: number,
  k: number,
  referenceDensity: number,
): { rho: Float64Array; radiusPx: Float64Array } {
  const p0 = positionsPx[0]!;
  const step = samples > 1 ? positionsPx[1]! - p0 : 1;
  const uAxis = (axisPx - p0) / step;
  const nr = Math.floor(Math.max(uAxis, samples - 1 - uAxis) + 1e-9) + 1;
  const eps = new Float64Array(nr);
  const dn = new Float64Array(nr);
  const rho = new Float64Array(lines * samples);
  const radiusPx = new Float64Array(samples);
  for (let c = 0; c < samples; c++) radiusPx[c] = Math.abs(positionsPx[c]! - axisPx);
  const at = (line: number, u: number): number => interp(normal, line * samples, 1, samples, u);
  const dnPad = new Float64Array(nr + 1);
  for (let l = 0; l < lines; l++) {
    for (let j = 0; j < nr; j++) {
      const uR = uAxis + j;
      const uL = uAxis - j;
      const hasR = uR >= -1e-9 && uR <= samples - 1 + 1e-9;
      const hasL = uL >= -1e-9 && uL <= samples - 1 + 1e-9;
      const eR = hasR ? at(l, Math.min(Math.max(uR, 0), samples - 1)) : NaN;
      const eL = hasL ? -at(l, Math.min(Math.max(uL, 0), samples - 1)) : NaN;
      const fR = Number.isFinite(eR);
      const fL = Number.isFinite(eL);
      eps[j] = fR && fL ? 0.5 * (eR + eL) : fR ? eR : fL ? eL : NaN;
    }
    eps[0] = 0;
    abelInvertDeflection(eps, nInf, dn);
    dnPad.set(dn);
    dnPad[nr] = 0; // far field
    for (let c = 0; c < samples; c++) {
      const r = Math.min(radiusPx[c]! / step, nr);
      rho[l * samples + c] = referenceDensity + interp(dnPad, 0, 1, nr + 1, r) / k;
    }
  }
  return { rho, radiusPx };
}
