#!/usr/bin/env node
// The `rhofield` command (compiled to dist/bin/rhofield.js, the package's bin).
import { reportError } from '../common.js';
import { run } from '../main.js';
import { installSignalCleanup } from '../outputs.js';

// `rhofield … | head`: a closed pipe ends the command quietly, as for other command-line tools
process.stdout.on('error', (e: NodeJS.ErrnoException) => {
  if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
  throw e;
});

// Ctrl-C / SIGTERM: remove unfinished results, exit 130 / 143 (only here and when main.js is run
// directly; in-process callers of run() keep their own signal handling)
installSignalCleanup();

run(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (err: unknown) => {
    process.exitCode = reportError(err);
  },
);
