/**
 * Locate an axis of symmetry from the deflection component normal to it, which is odd about the
 * axis: the axis position a minimises Σ (ε(a+s) + ε(a−s))² / Σ (ε(a+s)² + ε(a−s)²) over all lines and
 * offsets s (a normalised mirror-symmetry residual of the odd component). Candidates every quarter
 * grid step, refined by a parabola through the best three.
 */

/**
 * @param normal deflection normal to the axis, `lines × samples` row-major (one line per row for a
 *   vertical axis); NaN = no data.
 * @param samples samples per line. @param lines number of lines.
 * @param positionsPx position of each sample along the line, px (uniform step).
 * @returns axis position in px, or NaN when no candidate has enough overlapping data or signal.
 */
export function findSymmetryAxis(normal: ArrayLike<number>, samples: number, lines: number, positionsPx: ArrayLike<number>): number {
  if (samples < 5) return NaN;
  const p0 = positionsPx[0]!;
  const step = positionsPx[1]! - p0;
  const minPairs = Math.max(3, Math.floor(samples / 6));
  const sub = 4;
  const cands: number[] = [];
  const costs: number[] = [];
  const sample = (line: number, u: number): number => {
    if (u < 0 || u > samples - 1) return NaN;
    const i = Math.min(Math.floor(u), samples - 2);
    const t = u - i;
    const a = normal[line * samples + i]!;
    const b = normal[line * samples + i + 1]!;
    return a + (b - a) * t;
  };
  for (let k = 2 * sub; k <= (samples - 3) * sub; k++) {
    const u = k / sub; // candidate axis in sample-index units
    let num = 0;
    let den = 0;
    let pairs = 0;
    for (let s = 1; u - s >= 0 && u + s <= samples - 1; s++) {
      for (let l = 0; l < lines; l++) {
        const a = sample(l, u + s);
        const b = sample(l, u - s);
        if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
        num += (a + b) * (a + b);
        den += a * a + b * b;
      }
      pairs++;
    }
    if (pairs < minPairs || !(den > 0)) continue;
    cands.push(u);
    costs.push(num / den);
  }
  if (cands.length === 0) return NaN;
  let best = 0;
  for (let i = 1; i < costs.length; i++) if (costs[i]! < costs[best]!) best = i;
  let u = cands[best]!;
  if (best > 0 && best < costs.length - 1 && cands[best + 1]! - cands[best - 1]! < 2.5 / sub) {
    const cm = costs[best - 1]!, c0 = costs[best]!, cp = costs[best + 1]!;
    const d = cm - 2 * c0 + cp;
    if (d > 0) u += (0.5 * (cm - cp)) / d / sub;
  }
  return p0 + u * step;
}
