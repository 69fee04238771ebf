#!/usr/bin/env node
// The `rhofield` command (compiled to dist/bin/rhofield.js, the package's bin).
import { reportError } from '../common.js';
import { run } from '../main.js';

run(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (err: unknown) => {
    process.exitCode = reportError(err);
  },
);
