/** Run the rhofield CLI in-process (as `rhofield ARGV…`), capturing stdout and stderr and the exit code. */
import { vi } from 'vitest';
import { run } from '../packages/cli/src/main.js';

export async function cli(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const o = vi.spyOn(process.stdout, 'write').mockImplementation((s: string | Uint8Array) => ((out += String(s)), true));
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((s: string | Uint8Array) => ((err += String(s)), true));
  process.exitCode = undefined;
  try {
    const code = await run(argv);
    return { code, out, err };
  } finally {
    o.mockRestore();
    e.mockRestore();
    process.exitCode = undefined;
  }
}
