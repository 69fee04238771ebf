#!/usr/bin/env node
// Packs @rhofield/core and @rhofield/cli as npm tarballs and installs them into a folder, the way a
// user outside the checkout would (plain npm, no workspace):
//
//   pnpm pack:local DIR        (or: node scripts/pack-local.mjs DIR)
//
// Builds first (scripts/build.mjs), runs `pnpm pack` in each package (pnpm rewrites workspace:*
// versions and applies publishConfig, so the packed package.json points at dist/ only), leaves the
// two .tgz files in DIR and runs `npm install ./rhofield-core-*.tgz ./rhofield-cli-*.tgz` there (the
// third-party dependencies come from the npm registry). Then in DIR: `npx rhofield --help`, or a
// script.mjs importing '@rhofield/core' run with plain `node`.
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const dirArg = process.argv[2];
if (!dirArg || dirArg.startsWith('-')) {
  process.stderr.write('usage: pnpm pack:local DIR  (DIR: the folder to install the packed packages into; created if missing)\n');
  process.exit(2);
}
const dir = path.resolve(process.env['INIT_CWD'] ?? process.cwd(), dirArg);
mkdirSync(dir, { recursive: true });

/** Run a command, stop with its exit code when it fails. */
function run(cmd, args, cwd, env = process.env, stdout = 'inherit') {
  const r = spawnSync(cmd, args, { cwd, env, stdio: ['ignore', stdout, 'inherit'] });
  if (r.error) {
    process.stderr.write(`pack-local: cannot run ${cmd}: ${r.error.message}\n`);
    process.exit(1);
  }
  if (r.status !== 0) process.exit(r.status ?? 1);
}

run(process.execPath, [path.join(root, 'scripts/build.mjs')], root);

// pnpm: the one running this script if any, else the project's pinned version through npx
const execPath = process.env['npm_execpath'] ?? '';
const pnpm = !/pnpm/.test(path.basename(execPath))
  ? ['npx', ['-y', 'pnpm@12.4.2']]
  : /\.[cm]?js$/.test(execPath)
    ? [process.execPath, [execPath]]
    : [execPath, []]; // pnpm 12 is a native executable
const tarballs = [];
for (const pkg of ['core', 'cli']) {
  const pkgDir = path.join(root, 'packages', pkg);
  const { name, version } = JSON.parse(readFileSync(path.join(pkgDir, 'package.json'), 'utf8'));
  run(pnpm[0], [...pnpm[1], 'pack', '--pack-destination', dir], pkgDir, process.env, 'ignore'); // (its file list is long)
  tarballs.push(`./${name.replace(/^@/, '').replace('/', '-')}-${version}.tgz`);
}

// npm must not pick up the settings pnpm passes to scripts (npm_config_* and friends)
const env = Object.fromEntries(Object.entries(process.env).filter(([k]) => !/^npm_/i.test(k) && !/^pnpm_/i.test(k)));
run('npm', ['install', '--no-audit', '--no-fund', '--loglevel=error', ...tarballs], dir, env);
process.stdout.write(`installed ${tarballs.join(' ')} into ${dir}\n`);
