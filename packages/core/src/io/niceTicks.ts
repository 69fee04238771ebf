/**
 * "Nice" tick values for axes and colour bars: steps of 1, 2 or 5 × 10^k chosen so that about
 * `count` ticks fall in [min, max]. Method: Heckbert, "Nice numbers for graph labels", Graphics
 * Gems (1990); the same rule as d3-array's `ticks`.
 */

/**
 * Tick step for a range (1, 2 or 5 × 10^k).
 * @param min lower end; @param max upper end; @param count wanted number of ticks (≥ 1).
 */
export function niceStep(min: number, max: number, count: number): number {
  const span = Math.abs(max - min);
  if (!(span > 0) || !Number.isFinite(span)) return 1;
  const raw = span / Math.max(1, count);
  const p = 10 ** Math.floor(Math.log10(raw));
  const e = raw / p;
  return (e >= 7.07 ? 10 : e >= 3.16 ? 5 : e >= 1.41 ? 2 : 1) * p;
}

/**
 * Tick values inside [min, max] (inclusive), multiples of {@link niceStep}.
 * @returns ascending values; a single value when min = max.
 */
export function niceTicks(min: number, max: number, count = 5): number[] {
  if (!Number.isFinite(min) || !Number.isFinite(max)) return [];
  if (min > max) [min, max] = [max, min];
  if (min === max) return [min];
  const step = niceStep(min, max, count);
  const i0 = Math.ceil(min / step - 1e-9);
  const i1 = Math.floor(max / step + 1e-9);
  const out: number[] = [];
  for (let i = i0; i <= i1; i++) out.push(i * step + 0); // + 0 turns -0 into 0
  return out;
}

/** Label of a tick value with as many decimals as the step needs (no `-0`). */
export function formatTick(v: number, step: number): string {
  const decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  const s = (Math.abs(v) < step * 1e-6 ? 0 : v).toFixed(Math.min(decimals, 12));
  return s.replace('-', '−');
}

const SUPERSCRIPT: Record<string, string> = { '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹' };

/** `10` with a superscript exponent, e.g. 10⁻⁴. */
export function powerOfTenLabel(k: number): string {
  return '10' + String(k).split('').map((c) => SUPERSCRIPT[c] ?? c).join('');
}

/**
 * A single value for a label with `digits` significant digits: plain below 10⁴ and from 10⁻²
 * (e.g. `0.25`, `1200`), otherwise as mantissa × power of ten (e.g. `9.5×10⁻⁵`).
 */
export function formatValue(v: number, digits = 2): string {
  if (!Number.isFinite(v)) return String(v);
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e-2 && a < 1e4) return String(Number(v.toPrecision(digits))).replace('-', '−');
  const k = Math.floor(Math.log10(a));
  let m = Number((v / 10 ** k).toPrecision(digits));
  let kk = k;
  if (Math.abs(m) >= 10) {
    m /= 10;
    kk += 1;
  }
  return `${String(m).replace('-', '−')}×${powerOfTenLabel(kk)}`;
}
