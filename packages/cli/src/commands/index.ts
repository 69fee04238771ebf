/**
 * The command registry. Each command module exports `register(program)`; it is loaded only when its
 * command runs (or its help is asked for), so `rhofield --help` and light commands start without
 * loading the image, FFT and worker dependencies of the others. For the top-level help the other
 * commands appear as stubs with the same term and description. The description text lives here only:
 * each command module takes it with {@link describeCommand} (tests/cli/commandStubs.test.ts checks terms
 * and descriptions against the real registrations).
 */
import type { Command } from 'commander';

type Register = (program: Command) => void;

export interface CommandEntry {
  /** Command name as typed. */
  readonly name: string;
  /** Its line in the command list of `rhofield --help` (commander's subcommand term). */
  readonly term: string;
  /** The description shown there (the command's own description). */
  readonly description: string;
  /** Loads the module that registers this command (a module may register several). */
  readonly load: () => Promise<Register>;
}

/** The description of command `name` (one text for the stub and the real command). */
export function describeCommand(name: string): string {
  const c = COMMANDS.find((k) => k.name === name);
  if (!c) throw new Error(`no command ${name} in the registry`);
  return c.description;
}

const displacement = async (): Promise<Register> => (await import('./displacement.js')).register;

export const COMMANDS: readonly CommandEntry[] = [
  {
    name: 'displacement',
    term: 'displacement [options] <ref> <meas>',
    description: 'measure the dot displacement field between a reference and a measurement photograph',
    load: displacement,
  },
  {
    name: 'density',
    term: 'density [options] <ref> <meas>',
    description: 'measure displacement, then reconstruct density (and temperature) with the optical setup',
    load: displacement,
  },
  {
    name: 'view',
    term: 'view [options] <kind> <resultDir>',
    description: 'render classic views from a measured result: knife-edge, colour schlieren, shadowgraph, contours',
    load: async () => (await import('./view.js')).register,
  },
  {
    name: 'plan',
    term: 'plan [options]',
    description:
      'Predict what a planned setup will measure, before building it: magnification, fields of view, expected displacement, smallest detectable gradient, blur, printed dot size, window size, and the one change that would help most.',
    load: async () => (await import('./plan.js')).register,
  },
  {
    name: 'pattern',
    term: 'pattern [options]',
    description:
      'Write a printable random-dot background: non-overlapping dots at the requested fill, with a scale bar and a label (size, dot diameter, seed) in the bottom margin to check the print with a ruler. PDF and SVG are vector and exact to the page size; PNG is rasterised at --dpi.',
    load: async () => (await import('./pattern.js')).register,
  },
  {
    name: 'check',
    term: 'check [options] <ref> [meas]',
    description:
      'Check whether a reference image (and optionally a measurement image) is fit for BOS measurement: dot image diameter (e⁻², px), dots per window, contrast, clipped pixels, noise and focus; for a pair, the global shift (camera moved?), the fraction of weak correlation peaks and whether the two images show the same background at all (fewer than 10 % of windows with a correlation peak ≥ 0.5 and ≥ 25 % flagged by the median test: unusable). Damaged files (PNG checksum, TIFF cut short) are refused with exit 2. Each finding comes with advice. Exit code 3 means the images are unusable for measurement.',
    load: async () => (await import('./check.js')).register,
  },
  {
    name: 'batch',
    term: 'batch [options]',
    description:
      'Process a sequence of frames against reference images on all cores: per-pair displacement (and density with --setup) under OUT/pairs/<frame id>/, then mean, standard deviation and valid-vector counts in OUT/statistics/. Rerunning the same command resumes; failed pairs are listed and retried on the next run.',
    load: async () => (await import('./batch.js')).register,
  },
  {
    name: 'merge',
    term: 'merge [options] <dir>',
    description: 'Combine the statistics of all shards of a batch (rhofield batch --shard K/N, or a job array) into DIR/statistics.',
    load: async () => (await import('./merge.js')).register,
  },
  {
    name: 'simulate',
    term: 'simulate [options]',
    description:
      'Dry run of a planned setup: render the reference and disturbed dot images it would record for a known density field (planar Gaussian hot spot, axisymmetric plume, or a wedge with oblique shocks), blurred by the setup\'s defocus, measure displacement and density from them, and report the error of the whole chain.',
    load: async () => (await import('./simulate.js')).register,
  },
];

/**
 * The command the arguments ask for: the first argument that is not an option (after `help`, the
 * one it asks about); undefined when there is none (e.g. `--help`, `--version`).
 */
export function requestedCommand(argv: readonly string[]): string | undefined {
  const words = argv.filter((a) => !a.startsWith('-'));
  return words[0] === 'help' ? words[1] : words[0];
}

/**
 * Register the commands on `program`: the requested ones (or all, with `which: 'all'`) for real,
 * the others as stubs for the command list.
 * @returns the stub commands with their terms (for the help formatter).
 */
export async function registerCommands(program: Command, which: string | undefined | 'all'): Promise<Map<Command, string>> {
  const wanted = COMMANDS.find((c) => c.name === which)?.load;
  const stubs = new Map<Command, string>();
  for (const c of COMMANDS) {
    if (program.commands.some((p) => p.name() === c.name)) continue; // registered with an earlier one
    if (which === 'all' || c.load === wanted) (await c.load())(program);
    else stubs.set(program.command(c.name).description(c.description), c.term);
  }
  return stubs;
}
