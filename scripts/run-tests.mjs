#!/usr/bin/env node
// Runs the vitest suite and closes with a plain "N passed, N failed[, N skipped]" line (read by CI),
// taken from vitest's JSON reporter. Exit code is vitest's. Extra arguments go to vitest.
import { spawn } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';

const require = createRequire(import.meta.url);
const vitestBin = path.join(path.dirname(require.resolve('vitest/package.json')), 'vitest.mjs');
const outDir = path.resolve('.vitest-tmp');
mkdirSync(outDir, { recursive: true });
const outFile = path.join(outDir, 'results.json');
rmSync(outFile, { force: true });

const child = spawn(
  process.execPath,
  [vitestBin, 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${outFile}`, ...process.argv.slice(2)],
  { stdio: 'inherit' },
);
child.on('exit', (code, signal) => {
  let line = null;
  try {
    const r = JSON.parse(readFileSync(outFile, 'utf8'));
    const skipped = (r.numPendingTests ?? 0) + (r.numTodoTests ?? 0);
    line = `${r.numPassedTests} passed, ${r.numFailedTests} failed` + (skipped ? `, ${skipped} skipped` : '');
    if (r.numFailedTestSuites > 0 && r.numFailedTests === 0) {
      // a test file that failed to load counts as a failure
      line = `${r.numPassedTests} passed, ${r.numFailedTestSuites} failed` + (skipped ? `, ${skipped} skipped` : '');
    }
  } catch {
    line = `0 passed, 1 failed`;
  }
  process.stdout.write('\n' + line + '\n');
  process.exit(signal ? 1 : code ?? 1);
});
