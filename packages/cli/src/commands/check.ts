/**
 * `rhofield check REF [MEAS]`: is this image (pair) fit for measurement? Dot image diameter, dots per
 * window, contrast, clipping, noise, focus; for a pair also the global shift and (single correlation
 * pass) the fraction of weak correlation peaks. Exit 0 (warnings allowed), 3 when unusable, 2 on
 * usage/input errors.
 */
import type { Command } from 'commander';
import { diagnoseImage, diagnosePair, inputError, invalidParameter, loadImage, measureDisplacement, type Field, type Finding } from '@rhofield/core';
import { EXIT, EXIT_CODES_HELP, Log, parseIntOpt, parseNumOpt, requireFile } from '../common.js';
import { warnSlowKernels } from '../kernelWarning.js';
import { describeCommand } from './index.js';

interface CheckOpts {
  window?: string;
  saturation?: string;
  json?: boolean;
  quiet?: boolean;
  verbose?: boolean;
  force?: boolean;
}

/** Load an image to a grey Field (colour converted by the image stage; unreadable files → exit 2). */
export async function loadGrey(file: string): Promise<Field> {
  return (await loadImage(file)).field;
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
    .description(describeCommand('check'))
    .argument('<ref>', 'reference image (PNG, TIFF, JPEG; colour is converted to grey)')
    .argument('[meas]', 'measurement image of the same size (optional)')
    .option('--window <px>', 'interrogation window side for the dots-per-window figure and the correlation pass: a power of two 16–128, as in displacement (default 32)')
    .option('--saturation <count>', 'saturation count of the camera (default: inferred from the image maximum: 255, 1023, 4095, 16383 or 65535)')
    .option('--json', 'print the findings as JSON on stdout')
    .option('--quiet', 'no messages on stderr')
    .option('--verbose', 'more detail on errors')
    .option('--force', 'accepted for uniformity; check writes no files')
    .addHelpText('after', EXIT_CODES_HELP)
    .action(async (ref: string, meas: string | undefined, o: CheckOpts) => {
      const log = new Log(o);
      const windowPx = parseIntOpt('--window', o.window, 16, 128) ?? 32;
      if ((windowPx & (windowPx - 1)) !== 0) throw invalidParameter('--window', 'a power of two 16–128 (as the displacement command takes)', o.window);
      const maxValue = parseNumOpt('--saturation', o.saturation, 1e-12);
      requireFile('reference image', ref);
      if (meas) requireFile('measurement image', meas);
      if (meas) warnSlowKernels(log);
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
        if (a.width !== b.width || a.height !== b.height) {
          throw inputError(`images differ in size: reference ${ref} is ${a.width}×${a.height}, measurement ${meas} is ${b.width}×${b.height}; check a pair from the same camera and crop`);
        }
        // a single plain correlation pass, for the weak-peak fraction (sizes are checked by diagnosePair)
        const disp = a.width === b.width && a.height === b.height && a.width >= windowPx && a.height >= windowPx
          ? await measureDisplacement(a, b, { windowPx, passes: 1 })
          : undefined;
        const p = diagnosePair(a, b, { ...opts, ...(disp ? { displacement: disp } : {}) });
        show(log, `${ref} (reference): ${p.reference.width} × ${p.reference.height} px`, p.reference.findings);
        show(log, `${meas} (measurement)`, p.measurement.findings);
        show(log, 'pair', p.findings);
        if (!disp) log.info(`note: weak-peak fraction and image match not computed (images smaller than one ${windowPx} px window)`);
        usable = p.usable;
        log.json({ command: 'check', referenceFile: ref, measurementFile: meas, dotImageDiameterPx: p.reference.dotDiameterPx, ...p });
      }
      log.info(usable ? 'verdict: usable' + ' (see warnings above, if any)' : 'verdict: UNUSABLE for measurement');
      process.exitCode = usable ? EXIT.ok : EXIT.unusable;
    });
}
