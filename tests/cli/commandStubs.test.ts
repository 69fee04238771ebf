/**
 * The command list of `rhofield --help` comes from stubs (packages/cli/src/commands/index.ts) so that
 * start-up loads no command module; they must say exactly what the real registrations say.
 */
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { COMMANDS, requestedCommand } from '../../packages/cli/src/commands/index.js';
import { buildProgram } from '../../packages/cli/src/main.js';
import { cli } from '../cliHarness.js';

const root = path.resolve(import.meta.dirname, '../..');

describe('lazily loaded commands', () => {
  it('every stub has the term and description of its real command, in the same order', async () => {
    const full = await buildProgram('all');
    const help = full.createHelp();
    expect(full.commands.map((c) => c.name())).toEqual(COMMANDS.map((c) => c.name));
    for (const c of COMMANDS) {
      const real = full.commands.find((k) => k.name() === c.name)!;
      expect(c.term, c.name).toBe(help.subcommandTerm(real));
      expect(c.description, c.name).toBe(real.description());
    }
  });

  it('the top-level help from stubs equals the help with every command loaded', async () => {
    const full = await buildProgram('all');
    const light = await buildProgram(['--help']);
    expect(light.helpInformation()).toBe(full.helpInformation());
  });

  it('picks the command from the arguments (also after help and options)', () => {
    expect(requestedCommand(['--help'])).toBeUndefined();
    expect(requestedCommand(['plan', '--setup', 'x.json'])).toBe('plan');
    expect(requestedCommand(['help', 'density'])).toBe('density');
    expect(requestedCommand(['--verbose', 'check', 'a.png'])).toBe('check');
  });

  it('a command sharing a module with another (density) runs and documents itself', async () => {
    const h = await cli('density', '--help');
    expect(h.code).toBe(0);
    expect(h.out).toMatch(/--setup/);
    const u = await cli('densty');
    expect(u.code).toBe(2);
    expect(u.err).toMatch(/unknown command 'densty'/);
  });

  it('the built command prints the same top-level help as the sources', async () => {
    const r = spawnSync(process.execPath, [path.join(root, 'packages/cli/dist/bin/rhofield.js'), '--help'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const h = await cli('--help');
    expect(r.stdout).toBe(h.out);
  });
});
