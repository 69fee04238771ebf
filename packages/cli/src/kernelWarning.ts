/** The one-line warning when the displacement engine would run on its slower TypeScript kernels. */
import { kernelStatus, type KernelStatus } from '@rhofield/core/pair';
import type { Log } from './common.js';

let warned = false;

/**
 * Warn once per process (stderr, also with --quiet) when the WebAssembly SIMD kernels are missing or
 * cannot be compiled here; silent when they work or when RHOFIELD_KERNELS=js asked for the fallback.
 * @returns the kernel status (result.json records it too).
 */
export function warnSlowKernels(log: Log): KernelStatus {
  const k = kernelStatus();
  if (!k.simd && k.state !== 'js-requested' && !warned) {
    warned = true;
    log.warn(k.reason);
  }
  return k;
}
