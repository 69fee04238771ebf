/** The command registry: each entry adds one subcommand to the program. */
import type { Command } from 'commander';

export const commands: Array<(program: Command) => void> = [];
