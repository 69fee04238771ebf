/** The command registry: each entry adds one subcommand to the program. */
import type { Command } from 'commander';
import { register as displacement } from './displacement.js';
import { register as view } from './view.js';
import { register as plan } from './plan.js';
import { register as pattern } from './pattern.js';
import { register as check } from './check.js';
import { register as batch } from './batch.js';
import { register as merge } from './merge.js';
import { register as simulate } from './simulate.js';

export const commands: Array<(program: Command) => void> = [
  displacement,
  view,
  plan,
  pattern,
  check,
  batch,
  merge,
  simulate,
];
