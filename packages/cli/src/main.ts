/**
 * rhofield command-line entry. Thin layer: parses arguments, calls @rhofield/core, writes files.
 * Each command lives in ./commands/<name>.ts and exports `register(program)`.
 */
import { Command, CommanderError } from 'commander';
import { VERSION } from '@rhofield/core';
import { EXIT, EXIT_CODES_HELP, reportError } from './common.js';
import { commands } from './commands/index.js';
import { installSignalCleanup } from './outputs.js';

export function buildProgram(): Command {
  const program = new Command();
  program
    .name('rhofield')
    .description(
      'Quantitative background-oriented schlieren: measure dot displacement between a reference and a\n' +
        'disturbed photograph, convert it to light deflection and density gradients, and integrate to\n' +
        'density (and temperature). Run `rhofield <command> --help` for details.',
    )
    .version(VERSION, '-V, --version')
    .addHelpText('after', EXIT_CODES_HELP)
    .exitOverride();
  program.configureOutput({
    // one line: the parser's message and where the usage is
    writeErr: (s) => process.stderr.write(s.startsWith('error:') ? `rhofield: ${s.trim().replace(/\s*\n\s*/g, ' ')}; run with --help for usage\n` : s),
  });
  for (const register of commands) register(program);
  for (const c of program.commands) c.exitOverride();
  return program;
}

/** Run the CLI with the given argv (without node and script). Returns the exit code. */
export async function run(argv: string[]): Promise<number> {
  const program = buildProgram();
  try {
    await program.parseAsync(argv, { from: 'user' });
    return typeof process.exitCode === 'number' ? process.exitCode : EXIT.ok;
  } catch (err) {
    if (err instanceof CommanderError) {
      if (err.code === 'commander.helpDisplayed' || err.code === 'commander.version' || err.code === 'commander.help') return EXIT.ok;
      return EXIT.usage;
    }
    return reportError(err, argv.includes('--verbose'));
  }
}

const isMain = (() => {
  const arg = process.argv[1];
  if (!arg) return false;
  return arg.endsWith('main.ts') || arg.endsWith('rhofield.js') || arg.endsWith('rhofield');
})();

if (isMain) {
  // Ctrl-C / SIGTERM: remove unfinished results, exit 130 / 143 (not in-process callers of run())
  installSignalCleanup();
  run(process.argv.slice(2)).then(
    (code) => {
      process.exitCode = code;
    },
    (err) => {
      process.exitCode = reportError(err);
    },
  );
}
