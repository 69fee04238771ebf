/**
 * `rhofield plan --setup FILE`: what a planned setup will see (magnification, fields of view, expected
 * displacement, sensitivity, blur, dot and window advice, verdict). Table on stderr, --json on stdout.
 */
import type { Command } from 'commander';
import { formatPlan, loadSetup, planSetup, setupWarnings, type SetupPlan } from '@rhofield/core/setup';
import { EXIT_CODES_HELP, Log, parseNumOpt, requireFile } from '../common.js';
import { withSetupFile } from '../setupErrors.js';
import { describeCommand } from './index.js';

/** Safety caution shown in --help of commands that plan or imitate real experiments. */
export const SAFETY_HELP = `
Safety: flames, hot surfaces, compressed or asphyxiant gases and high-speed or pressurised facilities
are hazardous. This tool only computes optics; defer to local codes, the facility's rules and licensed
practice. Printed backgrounds lit by strong lamps or LEDs: check the lighting against IEC 62471.`;

interface PlanOpts {
  setup: string;
  noise?: string;
  fill?: string;
  json?: boolean;
  quiet?: boolean;
  verbose?: boolean;
}

export function register(program: Command): void {
  program
    .command('plan')
    .description(describeCommand('plan'))
    .requiredOption('--setup <file>', 'setup file (JSON, at most 1 MiB and 32 levels deep, see docs/input-checks.md); needs camera.fNumber, camera.sensorPx and expected')
    .option('--noise <px>', 'displacement noise of the correlation, px (default 0.05, common practice)')
    .option('--fill <fraction>', 'fill fraction of the printed pattern used for the window advice (default 0.4)')
    .option('--json', 'print the plan as JSON on stdout')
    .option('--quiet', 'no table on stderr')
    .option('--verbose', 'more detail on errors')
    .option('--force', 'accepted for uniformity; plan writes no files')
    .addHelpText('after', `${SAFETY_HELP}\n${EXIT_CODES_HELP}`)
    .action((o: PlanOpts) => {
      const log = new Log(o);
      const noisePx = parseNumOpt('--noise', o.noise, 1e-6, 100);
      const fill = parseNumOpt('--fill', o.fill, 1e-6, 0.5);
      requireFile('setup file', o.setup);
      const setup = loadSetup(o.setup);
      let pl: SetupPlan;
      try {
        pl = planSetup(setup, { ...(noisePx !== undefined ? { noisePx } : {}), ...(fill !== undefined ? { fill } : {}) });
      } catch (e) {
        throw withSetupFile(e, o.setup);
      }
      for (const w of setupWarnings(setup, o.setup)) log.warn(w);
      log.info(formatPlan(pl).trimEnd());
      // hot plumes and flames: one caution line (ΔT ≥ 100 K is flame or hot-surface territory)
      if (pl.temperatureChange !== null && Math.abs(pl.temperatureChange) >= 100) {
        log.info('caution: flames and hot surfaces: follow local codes and your facility\'s rules (see --help)');
      }
      log.json({ command: 'plan', setup: o.setup, ...pl });
    });
}
