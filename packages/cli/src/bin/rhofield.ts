#!/usr/bin/env node
// The `rhofield` command (compiled to dist/bin/rhofield.js, the package's bin).
import { reportError } from '../common.js';
import { run } from '../main.js';

// `rhofield … | head`: a closed pipe ends the command quietly, as for other command-line tools
process.stdout.on('error', (e: NodeJS.ErrnoException) => {
  if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
  throw e;
});

run(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (err: unknown) => {
    process.exitCode = reportError(err);
  },
);
