/**
 * `rhofield simulate --setup FILE --field KIND`: dry run of a planned setup. Renders the reference and
 * disturbed dot images the setup would record for a known density field (planar Gaussian hot spot,
 * axisymmetric plume, or a wedge with oblique shocks), blurred by the setup's defocus, processes them
 * (correlation, density reconstruction) and reports the error of the whole chain against the known
 * field. Table on stderr, --json on stdout; --out DIR writes the images (16-bit PNG) and result.json.
 */
import type { Command } from 'commander';
import {
  SIMULATION_FIELD_KINDS,
  createSimulationEngines,
  estimateMemory,
  invalidParameter,
  loadSetup,
  obliqueShockAngle,
  saveImage16,
  setupWarnings,
  simulateSetup,
  type SimulationFieldKind,
  type SimulationResult,
} from '@rhofield/core';
import { EXIT_CODES_HELP, Log, OutputDir, parseIntOpt, parseNumOpt, provenance, requireFile, type GlobalOpts } from '../common.js';
import { SAFETY_HELP } from './plan.js';
import { checkMemory, MAX_MEMORY_HELP, memoryBudget } from '../memoryGuard.js';
import { withSetupFile } from '../inputChecks.js';
import { warnSlowKernels } from '../kernelWarning.js';
import { describeCommand } from './index.js';

interface SimulateOpts extends GlobalOpts {
  setup: string;
  field: string;
  size?: string;
  window?: string;
  seed?: string;
  noise?: string;
  mach?: string;
  wedge?: string;
  out?: string;
  force?: boolean;
  maxMemory?: string;
}

const n = (v: number, digits = 4): string => (Number.isFinite(v) ? (Math.abs(v) !== 0 && Math.abs(v) < 1e-3 ? v.toExponential(2) : v.toPrecision(digits)) : 'n/a');

/** JSON-safe number (NaN and ±Infinity → null). */
const j = (v: number): number | null => (Number.isFinite(v) ? v : null);

/** The machine summary (result.json and --json). */
function summary(r: SimulationResult, o: { setupFile: string; sizePx: number; seed: number; noise: number; out?: string }): Record<string, unknown> {
  const e = r.errors;
  const d = r.displacement as SimulationResult['displacement'] & { counts?: Record<string, number> };
  return {
    command: 'simulate',
    ...provenance(),
    setupFile: o.setupFile,
    field: r.field,
    settings: { sizePx: o.sizePx, windowPx: r.windowPx, seed: o.seed, imageNoise: o.noise, dotImageDiameterPx: r.plan.dotImageDiameterPx, fill: 0.4, defocusBlurPx: r.plan.flowBlurPx },
    grid: { cols: r.displacement.grid.cols, rows: r.displacement.grid.rows },
    ...(d.counts ? { vectorCounts: d.counts } : {}),
    errors: {
      peakDisplacementPlannedPx: j(e.peakDisplacementPlannedPx),
      peakDisplacementTruePx: j(e.peakDisplacementTruePx),
      peakDisplacementMeasuredPx: j(e.peakDisplacementMeasuredPx),
      peakDisplacementMeasuredOverPlanned: j(e.peakDisplacementMeasuredPx / e.peakDisplacementPlannedPx),
      displacementRmsPx: j(e.displacementRmsPx),
      densityPeakTrueKgm3: j(e.densityPeakTrue),
      densityPeakMeasuredKgm3: j(e.densityPeakMeasured),
      densityRmsKgm3: j(e.densityRms),
      densityRmsRelative: j(e.densityRmsRelative),
    },
    plan: { ...r.plan },
    ...(o.out ? { outDir: o.out, files: ['reference.png', 'measurement.png'].concat(r.mask ? ['mask.png'] : [], ['result.json']) } : {}),
  };
}

function table(r: SimulationResult, sizePx: number): string {
  const e = r.errors;
  const rows: Array<[string, string, string, string, string]> = [
    ['', 'planned', 'true', 'measured', 'unit'],
    ['peak displacement', n(e.peakDisplacementPlannedPx), n(e.peakDisplacementTruePx), n(e.peakDisplacementMeasuredPx), 'px'],
    ['peak |ρ − ρ_ref|', n(r.field === 'shock' ? NaN : Math.abs(r.plan.densityChange)), n(e.densityPeakTrue), n(e.densityPeakMeasured), 'kg/m³'],
  ];
  const w = [0, 1, 2, 3, 4].map((k) => rows.reduce((m, x) => Math.max(m, x[k]!.length), 0));
  const lines = [
    `simulate ${r.field}: ${sizePx} × ${sizePx} px crop, ${r.windowPx} px windows, dot images ${n(r.plan.dotImageDiameterPx, 3)} px, defocus blur ${n(r.plan.flowBlurPx, 3)} px in the flow` +
      (r.field === 'shock' ? '' : `, disturbance 2L = ${n(r.plan.disturbancePx, 3)} px = ${n(r.plan.disturbancePx / r.windowPx, 2)} windows`),
  ].concat(rows.map((x) => `${x[0].padEnd(w[0]!)}  ${x[1].padStart(w[1]!)}  ${x[2].padStart(w[2]!)}  ${x[3].padStart(w[3]!)}  ${x[4]}`), [
    `displacement error (RMS, per component)  ${n(e.displacementRmsPx)} px`,
    `density error (RMS, mean offset removed)  ${n(e.densityRms)} kg/m³ = ${n(100 * e.densityRmsRelative, 3)} % of the true peak`,
    'planned: the planner’s unblurred Gaussian model; true: the known field after the defocus blur, at the window centres; measured: by correlation and reconstruction.',
  ]);
  return lines.join('\n');
}

/** Plain-language warnings about the chain's result. */
function warnings(r: SimulationResult): string[] {
  const e = r.errors;
  const w: string[] = [];
  const ratio = e.peakDisplacementMeasuredPx / e.peakDisplacementTruePx;
  const snr = e.peakDisplacementTruePx / e.displacementRmsPx;
  if (Number.isFinite(snr) && snr < 10) {
    w.push(`the peak displacement is only ${n(snr, 2)}× the displacement error: the signal is near the noise (measured peak ${n(100 * ratio, 3)} % of the true one); see the plan's advice`);
  } else if (Number.isFinite(ratio) && Math.abs(ratio - 1) > 0.2) {
    w.push(`measured peak displacement is ${n(100 * ratio, 3)} % of the true one: the correlation does not follow this field (too strong or too sharp for ${r.windowPx} px windows)`);
  }
  if (r.field !== 'shock' && r.plan.disturbancePx < 4 * r.windowPx) {
    w.push(`the disturbance (2L = ${n(r.plan.disturbancePx, 3)} px) spans fewer than 4 windows of ${r.windowPx} px; expect its peak to be smoothed`);
  }
  if (e.densityRmsRelative > 0.2) w.push(`density error ${n(100 * e.densityRmsRelative, 3)} % of the peak; see the plan's advice`);
  return w;
}

export function register(program: Command): void {
  program
    .command('simulate')
    .description(describeCommand('simulate'))
    .requiredOption('--setup <file>', 'setup file (JSON, see docs/input-checks.md) with camera.fNumber, camera.sensorPx and expected (Δρ or ΔT and lengthScale)')
    .requiredOption('--field <kind>', `known density field: ${SIMULATION_FIELD_KINDS.join(', ')} (gaussian and plume use expected; shock a wedge, see --mach, --wedge)`)
    .option('--size <px>', 'side of the simulated square image crop, px, 64–2048 (default 256)')
    .option('--window <px>', 'final interrogation window, px: a power of two 16–128 (default: the plan\'s)')
    .option('--seed <n>', 'random seed of dots and noise (default 1)')
    .option('--noise <fraction>', 'image noise, standard deviation relative to the dot peak, 0–0.5 (default 0.02)')
    .option('--mach <M>', 'shock: upstream Mach number, 1.05–10 (default 2)')
    .option('--wedge <deg>', 'shock: wedge half-angle in degrees, below the detachment angle (default 10)')
    .option('--out <dir>', 'write reference.png, measurement.png (16-bit), mask.png (shock) and result.json to this folder')
    .option('--force', 'replace the results rhofield wrote in --out earlier (other files are never touched)')
    .option('--max-memory <size>', MAX_MEMORY_HELP)
    .option('--json', 'print the summary (as in result.json) on stdout')
    .option('--quiet', 'no table on stderr')
    .option('--verbose', 'more detail, stack traces on errors')
    .addHelpText(
      'after',
      `
The crop is centred on the optical axis; the planned dot image diameter (e⁻²) and fill 0.4 are used.
gaussian: Δρ·exp(−r²/L²) uniform over flow.span (2·lengthScale when the setup is axisymmetric);
plume: the same profile about a vertical axis through the crop centre (Abel inversion).
The shock case puts a wedge apex a quarter of the crop from the left edge; upstream density is
medium.referenceDensity.
${SAFETY_HELP}
${EXIT_CODES_HELP}`,
    )
    .action(async (o: SimulateOpts) => {
      const log = new Log(o);
      if (!(SIMULATION_FIELD_KINDS as readonly string[]).includes(o.field)) {
        throw invalidParameter('--field', `one of ${SIMULATION_FIELD_KINDS.join(', ')}`, o.field);
      }
      const field = o.field as SimulationFieldKind;
      warnSlowKernels(log);
      const sizePx = parseIntOpt('--size', o.size, 64, 2048) ?? 256;
      const windowPx = parseIntOpt('--window', o.window, 16, 128);
      if (windowPx !== undefined && (windowPx & (windowPx - 1)) !== 0) throw invalidParameter('--window', 'a power of two 16–128', o.window);
      if (windowPx !== undefined && 4 * windowPx > sizePx) throw invalidParameter('--window', `at most a quarter of --size (${sizePx} px)`, o.window);
      const seed = parseIntOpt('--seed', o.seed, 0, 2 ** 31 - 1) ?? 1;
      const noise = parseNumOpt('--noise', o.noise, 0, 0.5) ?? 0.02;
      const mach = parseNumOpt('--mach', o.mach, 1.05, 10);
      const wedge = parseNumOpt('--wedge', o.wedge, 0.1, 45);
      if (field !== 'shock' && (mach !== undefined || wedge !== undefined)) throw invalidParameter(mach !== undefined ? '--mach' : '--wedge', 'only with --field shock', field);
      if (field === 'shock') {
        const M = mach ?? 2;
        const th = wedge ?? 10;
        try {
          obliqueShockAngle(M, (th * Math.PI) / 180);
        } catch (e) {
          const det = /detachment angle ([\d.]+)°/.exec((e as Error).message)?.[1];
          throw invalidParameter('--wedge', `a half-angle below the detachment angle${det ? ` ${det}°` : ''} for Mach ${M} (attached shocks)`, th);
        }
      }
      requireFile('setup file', o.setup);
      const setup = loadSetup(o.setup);
      if (!setup.expected) throw invalidParameter(`${o.setup}: expected`, 'an object {densityChange | temperatureChange, lengthScale} (the planner needs it)', undefined);
      // the working set of the rendered pair and its measurement (smallest window when not given: most
      // vectors), plus the rendered fields (about eight Float32 images)
      const est = estimateMemory({ width: sizePx, height: sizePx, windowPx: windowPx ?? 16, density: true, masked: field === 'shock' });
      const budget = memoryBudget(o.maxMemory);
      checkMemory(`--size ${sizePx}`, est, budget, est.bytes + 32 * sizePx * sizePx);
      // open the output folder first, so an existing folder is refused before the work
      const out = o.out !== undefined ? await OutputDir.open(o.out, !!o.force, { command: 'simulate', expect: ['reference.png', 'measurement.png', 'result.json'] }) : undefined;
      try {
        const r = await simulateSetup(setup, createSimulationEngines(), {
          field,
          sizePx,
          seed,
          noise,
          ...(windowPx !== undefined ? { windowPx } : {}),
          ...(mach !== undefined ? { mach } : {}),
          ...(wedge !== undefined ? { wedgeHalfAngleDeg: wedge } : {}),
        }).catch((e: unknown) => Promise.reject(withSetupFile(e, o.setup)));
        const s = summary(r, { setupFile: o.setup, sizePx, seed, noise, ...(o.out ? { out: o.out } : {}) });
        if (out) {
          await saveImage16(r.reference, out.file('reference.png'));
          await saveImage16(r.measurement, out.file('measurement.png'));
          if (r.mask) {
            const m = new Float32Array(r.mask.data.length);
            for (let i = 0; i < m.length; i++) m[i] = r.mask.data[i] ? 65535 : 0;
            await saveImage16({ width: r.mask.width, height: r.mask.height, data: m }, out.file('mask.png'));
          }
          await out.writeFile('result.json', JSON.stringify(s, null, 2) + '\n');
          await out.commit();
        }
        log.info(table(r, sizePx));
        for (const w of setupWarnings(setup, o.setup).concat(warnings(r))) log.warn(w);
        if (field === 'shock') {
          log.info('note: the planner models a Gaussian disturbance; for the shock compare true and measured only');
          log.info('caution: supersonic and pressurised facilities: follow the facility\'s rules and local codes (see --help)');
        }
        log.debug(`plan verdict: ${r.plan.verdict}; advice: ${r.plan.advice}`);
        const c = (r.displacement as { counts?: Record<string, number> }).counts;
        if (c) log.debug(`vectors: ${c['valid']} valid, ${c['replaced']} replaced, ${c['masked']} masked, ${c['failed']} failed`);
        if (o.out) log.info(`images and result.json in ${o.out}`);
        log.json(s);
      } catch (e) {
        await out?.abort();
        throw out ? out.explain(e) : e;
      }
    });
}
