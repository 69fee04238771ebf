/**
 * `rhofield displacement REF MEAS --out DIR` and `rhofield density REF MEAS --setup FILE --out DIR`:
 * the single-pair commands. Both share the displacement options; density adds the setup.
 */
import type { Command } from 'commander';
import { capThreads, describeSchedule, estimateMemory, formatBytes, invalidParameter, RhofieldError } from '@rhofield/core/pair';
import { EXIT_CODES_HELP, Log, OutputDir, parseIntOpt, parseNumOpt, requireFile, StageProgress, type GlobalOpts } from '../common.js';
import { DEFAULT_FORMATS, processPair, type PairOptions } from '../pipeline.js';
import { checkMemory, imageHeaders, MAX_MEMORY_HELP, memoryBudget } from '../memoryGuard.js';
import { warnSlowKernels } from '../kernelWarning.js';
import { describeCommand } from './index.js';

interface PairCliOpts extends GlobalOpts {
  out: string;
  window?: string;
  step?: string;
  passes?: string;
  mask?: string;
  flowFree?: string;
  format?: string;
  threads?: string;
  refPage?: string;
  measPage?: string;
  force?: boolean;
  setup?: string;
  figureWidth?: string;
  dpi?: string;
  maxMemory?: string;
  acceptMismatch?: boolean;
}

const SAFETY = `
Safety: BOS rigs sit beside flames, hot surfaces, compressed gas and high-speed facilities. This command
only processes images; follow local codes, your facility's rules and licensed practice for the experiment.`;

/** Add the options shared by displacement, density (and batch). */
export function addDisplacementOptions(cmd: Command): Command {
  return cmd
    .option('--window <px>', 'final interrogation window side, px (power of two, 16–128)', '32')
    .option('--step <px>', 'spacing of the final windows, px (default window/2 = 50% overlap)')
    .option('--passes <n>', 'number of correlation passes (default 3, see schedule below)', '3')
    .option('--mask <file>', 'mask image, same size as the photographs; non-zero pixels are used (a mask leaving under 5 % of the vectors is refused)')
    .option('--flow-free <x0,y0,x1,y1>', 'flow-free rectangle in px whose mean displacement is removed (camera shake)')
    .option('--format <list>', 'output formats, any of npy,h5,vti,mat,csv,png,svg', DEFAULT_FORMATS)
    .option('--figure-width <mm>', 'print width of the figures in mm (with --dpi; default: 800 px wide)')
    .option('--dpi <n>', 'figure resolution for print, 72–1200 (default 96 with --figure-width)')
    .option('--threads <n>', 'threads for correlation (default: all cores for images of 1 Mpx or more, else 1; capped at the cores)')
    .option('--max-memory <size>', MAX_MEMORY_HELP)
    .option('--ref-page <n>', 'page of a multi-page TIFF reference (0-based)')
    .option('--meas-page <n>', 'page of a multi-page TIFF measurement (0-based)')
    .option('--force', 'replace the results rhofield wrote in --out earlier (other files are never touched)')
    .option('--accept-mismatch', 'keep the result even when the two images do not show the same background (refused by default: fewer than 10 % of vectors with a correlation peak ≥ 0.5 and ≥ 25 % flagged by the median test)')
    .option('--json', 'print a machine summary (result.json) on stdout')
    .option('--quiet', 'no progress messages (a progress bar appears only on a terminal, after ~1 s)')
    .option('--verbose', 'more messages, stack traces on errors');
}

/** Validate the shared options into PairOptions. */
export function pairOptionsFromCli(o: PairCliOpts): PairOptions {
  const windowPx = parseIntOpt('--window', o.window ?? '32', 16, 128)!;
  if ((windowPx & (windowPx - 1)) !== 0) throw invalidParameter('--window', 'a power of two 16–128', o.window);
  const stepPx = parseIntOpt('--step', o.step, 1);
  const passes = parseIntOpt('--passes', o.passes ?? '3', 1, 12)!;
  const threads = parseIntOpt('--threads', o.threads, 1, 64);
  let flowFreeRegionPx: [number, number, number, number] | undefined;
  if (o.flowFree !== undefined) {
    const v = o.flowFree.split(',').map(Number);
    if (v.length !== 4 || v.some((n) => !Number.isFinite(n))) throw invalidParameter('--flow-free', 'four numbers x0,y0,x1,y1 in px', o.flowFree);
    flowFreeRegionPx = v as [number, number, number, number];
  }
  if (o.mask) requireFile('mask', o.mask);
  const widthMm = parseNumOpt('--figure-width', o.figureWidth, 20, 1000);
  const dpi = parseNumOpt('--dpi', o.dpi, 72, 1200);
  if (dpi !== undefined && widthMm === undefined) throw new RhofieldError('usage', '--dpi needs --figure-width (the print width in mm); add --figure-width or drop --dpi');
  return {
    ...(widthMm !== undefined ? { figure: { widthMm, ...(dpi !== undefined ? { dpi } : {}) } } : {}),
    windowPx,
    ...(stepPx !== undefined ? { stepPx } : {}),
    passes,
    ...(o.mask ? { maskPath: o.mask } : {}),
    ...(flowFreeRegionPx ? { flowFreeRegionPx } : {}),
    formats: o.format ?? DEFAULT_FORMATS,
    ...(threads !== undefined ? { threads } : {}),
    ...(o.acceptMismatch ? { acceptMismatch: true } : {}),
  };
}

async function runPair(kind: 'displacement' | 'density', ref: string, meas: string, o: PairCliOpts): Promise<void> {
  const log = new Log(o);
  requireFile('reference image', ref);
  requireFile('measurement image', meas);
  const options = pairOptionsFromCli(o);
  if (options.threads !== undefined) {
    const cap = capThreads(options.threads, '--threads');
    if (cap.warning) log.warn(cap.warning);
    options.threads = cap.threads;
  }
  // the working set from the headers, before any pixel is decoded or anything written
  const budget = memoryBudget(o.maxMemory);
  const head = await imageHeaders(ref, meas);
  const estimate = estimateMemory({
    ...head,
    ...(options.windowPx !== undefined ? { windowPx: options.windowPx } : {}),
    ...(options.stepPx !== undefined ? { stepPx: options.stepPx } : {}),
    ...(options.passes !== undefined ? { passes: options.passes } : {}),
    ...(options.threads !== undefined ? { threads: options.threads } : {}),
    masked: options.maskPath !== undefined,
    density: kind === 'density',
  });
  checkMemory(`${ref} and ${meas} (${head.width}×${head.height} px)`, estimate, budget, estimate.bytes, undefined, head);
  log.debug(`estimated working set ${formatBytes(estimate.bytes)} (budget ${formatBytes(budget.bytes)})`);
  if (kind === 'density') {
    if (!o.setup) throw invalidParameter('--setup', 'a setup file (JSON, see README)', undefined);
    requireFile('setup file', o.setup);
    // the setup parser (and its schema library) loads only for density
    const { loadSetup } = await import('@rhofield/core/setup');
    options.setup = loadSetup(o.setup);
    options.setupPath = o.setup;
  }
  const refPage = parseIntOpt('--ref-page', o.refPage, 0);
  const measPage = parseIntOpt('--meas-page', o.measPage, 0);
  const out = await OutputDir.open(o.out, !!o.force, { command: kind, expect: ['result.json'] });
  warnSlowKernels(log);
  const progress = new StageProgress(o);
  try {
    const summary = await processPair(
      { refPath: ref, measPath: meas, ...(refPage !== undefined ? { refPage } : {}), ...(measPage !== undefined ? { measPage } : {}), options },
      out.staging,
      (stage, fraction) => {
        progress.stage(stage, fraction);
        log.debug(`stage: ${stage}`);
      },
    );
    // the banner only once the inputs (images, mask, the pair's match, the setup) passed their checks
    log.info(`rhofield ${kind}: ${ref} → ${meas}`);
    progress.stage('moving results into place', 0.99);
    log.debug('stage: moving results into place');
    await out.commit();
    progress.stop();
    const d = summary.displacement as { counts: Record<string, number>; maxMagnitudePx: number | null };
    const g = summary.grid as { cols: number; rows: number };
    log.info(
      `${g.cols}×${g.rows} vectors: ${d.counts.valid} valid, ${d.counts.replaced} replaced, ${d.counts.masked} masked, ${d.counts.failed} failed; max |d| ${d.maxMagnitudePx?.toFixed(3) ?? 'n/a'} px`,
    );
    const dens = summary.density as { minKgm3: number; maxKgm3: number } | undefined;
    if (dens) log.info(`density ${dens.minKgm3.toFixed(5)} – ${dens.maxKgm3.toFixed(5)} kg/m³`);
    for (const w of (summary.warnings as string[]) ?? []) log.warn(w);
    log.info(`results in ${o.out}`);
    log.json({ ...summary, outDir: o.out });
  } catch (e) {
    progress.stop();
    await out.abort();
    throw out.explain(e);
  }
}

export function register(program: Command): void {
  const schedule = describeSchedule({});
  const d = program
    .command('displacement')
    .description(describeCommand('displacement'))
    .argument('<ref>', 'reference image (no flow): PNG, TIFF (8/16-bit, multi-page) or JPEG')
    .argument('<meas>', 'measurement image (through the flow), same size')
    .requiredOption('--out <dir>', 'output folder (new, or any folder: results go in beside other files; --force replaces earlier results)');
  addDisplacementOptions(d)
    .addHelpText(
      'after',
      `
Outputs: displacement.csv (x_px,y_px,dx_px,dy_px,magnitude_px,peak_ratio,correlation,status), displacement.npy
(float32 rows×cols×2, NaN where no value), displacement_*.png figures, result.json (settings, input
SHA-256, version, timings), .rhofield-manifest.json (the files rhofield wrote: --force replaces only
those; other files in --out are never touched). Window centres in image pixels (pixel centres at
integer coordinates); dx right-positive, dy down-positive, measured minus reference.

Default schedule (--window 32 --passes 3):
${schedule}
${EXIT_CODES_HELP}`,
    )
    .action((ref: string, meas: string, o: PairCliOpts) => runPair('displacement', ref, meas, o));

  const r = program
    .command('density')
    .description(describeCommand('density'))
    .argument('<ref>', 'reference image (no flow)')
    .argument('<meas>', 'measurement image (through the flow), same size')
    .requiredOption('--setup <file>', 'setup file (JSON: camera, geometry, medium, flow; SI units; at most 1 MiB and 32 levels deep)')
    .requiredOption('--out <dir>', 'output folder (new, or any folder: results go in beside other files; --force replaces earlier results)');
  addDisplacementOptions(r)
    .addHelpText(
      'after',
      `
Outputs: the displacement files, density.csv (x_px,y_px,x_m,y_m,rho_kgm3[,temperature_K][,r_m],eps_*,drho_*), density.npy
(float32 rows×cols), density_*.png figures, result.json. x_m to the right and y_m upward in the flow
plane, origin at the image centre unless geometry.originPx is set. Temperature (when medium.pressure is
given) assumes constant pressure and composition.
${SAFETY}
${EXIT_CODES_HELP}`,
    )
    .action((ref: string, meas: string, o: PairCliOpts) => runPair('density', ref, meas, o));
}
