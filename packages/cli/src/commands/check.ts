/**
 * `rhofield check REF [MEAS]`: is this image (pair) fit for measurement? Dot image diameter, dots per
 * window, contrast, clipping, noise, focus; for a pair also the global shift and (single correlation
 * pass) the fraction of weak correlation peaks. Exit 0 (warnings allowed), 3 when unusable, 2 on
 * usage/input errors.
 */
import type { Command } from 'commander';
import * as core from '@rhofield/core';
import { diagnoseImage, diagnosePair, inputError, type DiagnosePairOptions, type Field, type Finding } from '@rhofield/core';

type Displacement = NonNullable<DiagnosePairOptions['displacement']>;
import { EXIT, Log, parseIntOpt, parseNumOpt, requireFile } from '../common.js';

interface CheckOpts {
  window?: string;
  saturation?: string;
  json?: boolean;
  quiet?: boolean;
  verbose?: boolean;
  force?: boolean;
}

type Loader = (file: string) => Promise<unknown>;

/** Load an image to a grey Field through the image stage's loader. */
export async function loadGrey(file: string): Promise<Field> {
  const load = (core as unknown as Record<string, unknown>)['loadImage'] as Loader | undefined;
  if (typeof load !== 'function') throw inputError('image loading is not available in this build (image stage missing)');
  const r = (await load(file)) as Field | { field: Field };
  return 'data' in r ? r : r.field;
}

/** Optional single-pass correlation through the correlate stage, when present. */
async function singlePass(ref: Field, meas: Field, windowPx: number): Promise<Displacement | undefined> {
  const measure = (core as unknown as Record<string, unknown>)['measureDisplacement'] as
    | ((a: Field, b: Field, o: Record<string, unknown>) => Displacement | Promise<Displacement>)
    | undefined;
  if (typeof measure !== 'function') return undefined;
  return await measure(ref, meas, { windowPx, passes: 1 });
}

function show(log: Log, title: string, findings: readonly Finding[]): void {
  log.info(title);
  for (const f of findings) {
    const tag = f.level === 'ok' ? '  ok  ' : f.level === 'warning' ? ' warn ' : ' FAIL ';
    log.info(`[${tag}] ${f.message}\n         → ${f.advice}`);
  }
}

export function register(program: Command): void {
  program
    .command('check')
    .description('Check whether a reference image (and optionally a measurement image) is fit for BOS measurement: dot image diameter (e⁻², px), dots per window, contrast, clipped pixels, noise and focus; for a pair, the global shift (camera moved?) and the fraction of weak correlation peaks. Each finding comes with advice. Exit code 3 means the images are unusable for measurement.')
    .argument('<ref>', 'reference image (PNG, TIFF, JPEG; colour is converted to grey)')
    .argument('[meas]', 'measurement image of the same size (optional)')
    .option('--window <px>', 'interrogation window side for the dots-per-window figure and the correlation pass (default 32)')
    .option('--saturation <count>', 'saturation count of the camera (default: inferred from the image maximum: 255, 1023, 4095, 16383 or 65535)')
    .option('--json', 'print the findings as JSON on stdout')
    .option('--quiet', 'no messages on stderr')
    .option('--verbose', 'more detail on errors')
    .option('--force', 'accepted for uniformity; check writes no files')
    .action(async (ref: string, meas: string | undefined, o: CheckOpts) => {
      const log = new Log(o);
      const windowPx = parseIntOpt('--window', o.window, 8, 512) ?? 32;
      const maxValue = parseNumOpt('--saturation', o.saturation, 1e-12);
      requireFile('reference image', ref);
      if (meas) requireFile('measurement image', meas);
      const a = await loadGrey(ref);
      const opts = { windowPx, ...(maxValue !== undefined ? { maxValue } : {}) };
      let usable: boolean;
      if (!meas) {
        const r = diagnoseImage(a, opts);
        show(log, `${ref}: ${r.width} × ${r.height} px`, r.findings);
        usable = r.usable;
        log.json({ command: 'check', referenceFile: ref, dotImageDiameterPx: r.dotDiameterPx, ...r });
      } else {
        const b = await loadGrey(meas);
        const disp = a.width === b.width && a.height === b.height ? await singlePass(a, b, windowPx) : undefined;
        const p = diagnosePair(a, b, { ...opts, ...(disp ? { displacement: disp } : {}) });
        show(log, `${ref} (reference): ${p.reference.width} × ${p.reference.height} px`, p.reference.findings);
        show(log, `${meas} (measurement)`, p.measurement.findings);
        show(log, 'pair', p.findings);
        if (!disp) log.info('note: weak-peak fraction not computed (no correlation stage in this build)');
        usable = p.usable;
        log.json({ command: 'check', referenceFile: ref, measurementFile: meas, dotImageDiameterPx: p.reference.dotDiameterPx, ...p });
      }
      log.info(usable ? 'verdict: usable' + ' (see warnings above, if any)' : 'verdict: UNUSABLE for measurement');
      process.exitCode = usable ? EXIT.ok : EXIT.unusable;
    });
}
