/**
 * Human-readable table of a {@link SetupPlan}: one quantity per line with unit and the source of its
 * formula, followed by the verdict, the advice and the notes.
 */
import type { SetupPlan } from './planSetup.js';

const fmt = (v: number, digits = 3): string => {
  if (!Number.isFinite(v)) return String(v);
  const a = Math.abs(v);
  return a !== 0 && (a < 1e-3 || a >= 1e5) ? v.toExponential(digits - 1) : v.toPrecision(digits);
};
const mm = (v: number): string => fmt(v * 1e3);

/**
 * Format a plan as aligned text lines (quantity, value, unit, source).
 * @returns the table as one string ending in a newline.
 */
export function formatPlan(pl: SetupPlan): string {
  const rows: Array<[string, string, string, string]> = [
    ['background magnification M', fmt(pl.magnification, 4), '', 'thin lens f/(Z_B−f)'],
    ['field of view at background', `${mm(pl.fieldOfViewBackground[0])} × ${mm(pl.fieldOfViewBackground[1])}`, 'mm', 'sensor·p/M'],
    ['field of view at flow', `${mm(pl.fieldOfViewFlow[0])} × ${mm(pl.fieldOfViewFlow[1])}`, 'mm', 'thin lens'],
    ['pixel size at background', fmt(pl.backgroundPixelSize * 1e6), 'µm', 'p/M'],
    ['pixel size at flow', fmt(pl.flowPixelSize * 1e6), 'µm', 'p·Z_A·(Z_B−f)/(f·Z_B)'],
    ['Gladstone–Dale K', fmt(pl.gladstoneDale, 4), 'm³/kg', pl.medium],
    ['density change Δρ', fmt(pl.densityChange), 'kg/m³', pl.temperatureChange !== null ? `isobaric, ΔT = ${fmt(pl.temperatureChange)} K` : 'given'],
    ['max density gradient', fmt(pl.maxDensityGradient), 'kg/m⁴', 'Gaussian model'],
    ['max deflection', fmt(pl.maxDeflection), 'rad', 'K·W·|∇ρ|/n0'],
    ['max displacement', fmt(pl.maxDisplacementPx), 'px', 'M·Z_D·eps/p (Richard & Raffel 2001)'],
    ['max displacement gradient', fmt(pl.maxDisplacementGradient), 'px/px', 'Gaussian model'],
    [`smallest detectable gradient`, fmt(pl.minDetectableGradient), 'kg/m⁴', `noise ${pl.noisePx} px over span ${mm(pl.effectiveSpan)} mm`],
    ['smallest detectable deflection', fmt(pl.minDetectableDeflection), 'rad', `noise ${pl.noisePx} px`],
    ['defocus blur in flow', fmt(pl.flowBlur * 1e3), 'mm', `(f/N)·Z_D/Z_B = ${fmt(pl.flowBlurPx)} px`],
    ['diffraction blur', fmt(pl.diffractionBlurPx), 'px', '2.44·N·(1+M)·λ (from memory, standard optics)'],
    ['printed dot diameter', mm(pl.recommendedDotDiameter), 'mm', `dot image ${fmt(pl.dotImageDiameterPx)} px (e⁻²)`],
    ['final window', String(pl.windowPx), 'px', '≥ 10 dots (common practice)'],
    ['first-pass window', String(pl.firstWindowPx), 'px', '≥ 4 × max displacement (Keane & Adrian)'],
    ['disturbance 2L', fmt(pl.disturbancePx), 'px', `${fmt(pl.windowsAcrossDisturbance, 2)} windows`],
  ];
  const w0 = rows.reduce((m, r) => Math.max(m, r[0].length), 0);
  const w1 = rows.reduce((m, r) => Math.max(m, r[1].length), 0);
  const w2 = rows.reduce((m, r) => Math.max(m, r[2].length), 0);
  const lines = rows.map((r) => `${r[0].padEnd(w0)}  ${r[1].padStart(w1)} ${r[2].padEnd(w2)}  ${r[3]}`);
  lines.push('', `model: ${pl.model}`, `verdict: ${pl.verdict}`, `advice: ${pl.advice}`);
  for (const n of pl.notes) lines.push(`note: ${n}`);
  return lines.join('\n') + '\n';
}
