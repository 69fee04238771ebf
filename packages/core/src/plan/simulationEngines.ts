/**
 * The library's own engines for {@link simulateSetup}: the dot renderer of synth/dots.ts (Gaussian
 * dots of known e⁻² diameter, exact pixel integration, 16-bit counts with additive Gaussian noise) and
 * the multi-pass correlator {@link measureDisplacement}.
 *
 * Choices: 16-bit counts; background 5 % of full scale; the peak of an amplitude-1 dot 35 % of full
 * scale (per-dot amplitudes uniform in [0.5, 1), so overlapping dots at fill 0.4 rarely clip); dot
 * number density `fill / (π·D²/4)` (the fraction of the area inside the dots' e⁻² circles, counting
 * overlaps); dots are also placed outside the crop by the largest displacement plus three diameters,
 * so the disturbed image has dots up to its border. A body hiding the background (mask 0) is painted
 * flat at the background level (no texture) in both images, as a model in front of the background.
 */
import { invalidParameter } from '../util/errors.js';
import type { Field, MaskField } from '../util/field.js';
import { generateDots, renderDots } from '../synth/dots.js';
import { measureDisplacement } from '../correlate/measureDisplacement.js';
import type { SimulationEngines } from './simulateSetup.js';

const FULL = 65535;

/** Options of {@link createSimulationEngines}. */
export interface SimulationEngineOptions {
  /** Correlation passes (default 3; see describeSchedule). */
  readonly passes?: number;
  /** Threads of the correlator (default: measureDisplacement's). */
  readonly threads?: number;
}

function paintHidden(f: Field, hidden: MaskField | undefined, level: number): Field {
  if (!hidden) return f;
  const d = f.data;
  for (let i = 0; i < d.length; i++) if (!hidden.data[i]) d[i] = level;
  return f;
}

/**
 * Renderer and correlator for {@link simulateSetup} built from synth/dots.ts and measureDisplacement.
 * @param o correlation passes and threads.
 * @returns engines usable by simulateSetup.
 */
export function createSimulationEngines(o: SimulationEngineOptions = {}): SimulationEngines {
  return {
    renderPair(r) {
      if (!(r.fill > 0 && r.fill <= 0.5)) throw invalidParameter('fill', 'a fraction in (0, 0.5]', r.fill);
      let maxD = 0;
      // largest displacement on a coarse lattice over the crop, for the margin of extra dots
      for (let y = 0; y < r.height; y += 4) for (let x = 0; x < r.width; x += 4) {
        const [a, b] = r.displacement(x, y);
        const m = Math.hypot(a, b);
        if (Number.isFinite(m) && m > maxD) maxD = m;
      }
      const margin = Math.ceil(maxD + 3 * r.dotDiameterPx + 2);
      const density = r.fill / ((Math.PI * r.dotDiameterPx * r.dotDiameterPx) / 4);
      const dots = generateDots({ width: r.width, height: r.height, diameterPx: r.dotDiameterPx, density, seed: r.seed, margin });
      const peak = 0.35 * FULL;
      const background = 0.05 * FULL;
      const common = { width: r.width, height: r.height, bitDepth: 16 as const, peak, background, noiseSigma: r.noise * peak };
      const reference = renderDots(dots, { ...common, seed: r.seed + 1 });
      const measurement = renderDots(dots, {
        ...common,
        seed: r.seed + 2,
        displacement: (x: number, y: number) => {
          const [a, b] = r.displacement(x, y);
          return Number.isFinite(a) && Number.isFinite(b) ? [a, b] : [0, 0];
        },
      });
      return { reference: paintHidden(reference, r.hidden, background), measurement: paintHidden(measurement, r.hidden, background) };
    },
    async measure(reference, measurement, m) {
      return await measureDisplacement(reference, measurement, {
        windowPx: m.windowPx,
        ...(o.passes !== undefined ? { passes: o.passes } : {}),
        ...(o.threads !== undefined ? { threads: o.threads } : {}),
        ...(m.mask ? { mask: m.mask } : {}),
      });
    },
  };
}
