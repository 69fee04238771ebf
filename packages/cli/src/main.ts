/**
 * rhofield command-line entry. Thin layer: parses arguments, calls @rhofield/core, writes files.
 * Each command lives in ./commands/<name>.ts and exports `register(program)`; only the module of the
 * command that runs is loaded (./commands/index.ts).
 */
import { realpathSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import { Command, CommanderError, Help } from 'commander';
import { VERSION } from '@rhofield/core/errors';
import { EXIT, EXIT_CODES_HELP, reportError } from './common.js';
import { registerCommands, requestedCommand } from './commands/index.js';
import { installSignalCleanup } from './outputs.js';

/**
 * The program with the command `argv` asks for registered (all commands with `which: 'all'`); the
 * others are listed in the help only.
 */
export async function buildProgram(argv: readonly string[] | 'all' = 'all'): Promise<Command> {
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
  const stubs = await registerCommands(program, argv === 'all' ? 'all' : requestedCommand(argv));
  const term = Help.prototype.subcommandTerm;
  program.configureHelp({ subcommandTerm: (cmd) => stubs.get(cmd) ?? term.call(program.createHelp(), cmd) });
  for (const c of program.commands) c.exitOverride();
  return program;
}

/** Run the CLI with the given argv (without node and script). Returns the exit code. */
export async function run(argv: string[]): Promise<number> {
  try {
    const program = await buildProgram(argv);
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

/** Run directly (`node dist/main.js`, `tsx src/main.ts`), not imported (the bin and scripts import it). */
const isMain = (() => {
  const arg = process.argv[1];
  if (!arg) return false;
  try {
    return pathToFileURL(realpathSync(arg)).href === import.meta.url;
  } catch {
    return false;
  }
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
