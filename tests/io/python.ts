/**
 * Independent readers for the writer tests: Debian's /usr/bin/python3 with numpy, h5py and scipy
 * (installed by .ci/run). On CI (CI=true) a missing reader fails the tests; on a dev machine they
 * are skipped with a console message.
 */
import { spawnSync } from 'node:child_process';

export const PYTHON = '/usr/bin/python3';
export const IN_CI = process.env['CI'] === 'true';

/** True when /usr/bin/python3 imports all `modules`. */
export function pythonHas(modules: readonly string[]): boolean {
  const r = spawnSync(PYTHON, ['-c', `import ${modules.join(', ')}`], { encoding: 'utf8' });
  return r.status === 0;
}

/** Whether to skip a python-backed suite (prints why); never skips on CI. */
export function skipWithoutPython(modules: readonly string[]): boolean {
  if (pythonHas(modules)) return false;
  if (IN_CI) return false; // run and fail loudly
  console.warn(`[rhofield tests] SKIPPED: ${PYTHON} with ${modules.join(', ')} is not available (apt-get install python3-numpy python3-h5py python3-scipy)`);
  return true;
}

/**
 * Run a python script with arguments; it must print one JSON document. NaN must be sent as null.
 * @throws Error with python's stderr when it fails.
 */
export function runPython<T = unknown>(script: string, args: readonly string[] = []): T {
  const r = spawnSync(PYTHON, ['-c', script, ...args], { encoding: 'utf8', maxBuffer: 64 << 20 });
  if (r.status !== 0) throw new Error(`python reader failed (${r.error?.message ?? 'exit ' + r.status}):\n${r.stderr}`);
  return JSON.parse(r.stdout) as T;
}

/** Python helper prelude: `out(obj)` prints JSON with NaN → null (recursively through numpy arrays). */
export const PY_PRELUDE = `
import json, sys, math
import numpy as np
def clean(x):
    if isinstance(x, np.ndarray): return clean(x.tolist())
    if isinstance(x, (list, tuple)): return [clean(v) for v in x]
    if isinstance(x, dict): return {k: clean(v) for k, v in x.items()}
    if isinstance(x, (np.floating, float)):
        x = float(x); return None if math.isnan(x) else x
    if isinstance(x, (np.integer,)): return int(x)
    if isinstance(x, bytes): return x.decode()
    return x
def out(o): print(json.dumps(clean(o)))
`;
