/**
 * The WebAssembly SIMD kernels of the displacement engine (kernels.wat, built to kernels.wasm): the
 * Lanczos-4 and Keys cubic deformation rows and the lag-limited correlation, 4 lanes of f32 at a time.
 * Each thread has its own instance and memory; the caller copies the image rows a chunk needs into
 * that memory and the results out again (a few hundred kB per chunk, against millions of
 * multiply–adds).
 *
 * The plain TypeScript kernels stay as the reference (tests compare the two) and as the fallback:
 * {@link simdKernels} returns null where WebAssembly SIMD is missing or when the environment variable
 * `RHOFIELD_KERNELS=js` asks for the TypeScript kernels (used by the benchmark to show the gain).
 * Measured on 2048² pairs (bench `displacement`, 2 threads): see DEVELOPERS.md.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { LANCZOS4_TABLE } from './lanczos.js';

/** The parts of the WebAssembly JS API used here (the project's TypeScript libs do not declare it). */
interface WasmApi {
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: unknown };
}
const wasm = (globalThis as unknown as { WebAssembly: WasmApi }).WebAssembly;

interface KernelExports {
  memory: { buffer: ArrayBuffer; grow(pages: number): number };
  lanczos4_row(tab: number, src: number, srcY0: number, width: number, height: number, y: number, hx: number, hy: number, s: number, out: number, list: number): number;
  keys_row(src: number, srcY0: number, width: number, height: number, y: number, hx: number, hy: number, s: number, out: number, list: number): number;
  half_pred(x0: number, x1: number, x2: number, x3: number, dy: number, w0: number, w1: number, w2: number, w3: number, width: number, hx: number, hy: number, mm: number): void;
  direct_window(A: number, B: number, stride: number, n: number, a: number, b: number, out: number): void;
  corr_shifted(a: number, b: number, n: number, du: number, dv: number, out: number): void;
}

const PAGE = 65536;

/** One thread's kernel instance with a bump allocator over its memory. */
export class SimdKernels {
  readonly k: KernelExports;
  /** Byte offset of the Lanczos-4 weight table (f32, 4097 × 8). */
  readonly lanczosTable: number;
  /** Views of the memory; replaced when it grows ({@link generation} counts the replacements). */
  f32!: Float32Array;
  f64!: Float64Array;
  generation = 0;
  /** End of the permanent allocations; the scratch area starts here. */
  private top = 0;

  constructor(module: object) {
    this.k = new wasm.Instance(module, {}).exports as unknown as KernelExports;
    this.refresh();
    this.lanczosTable = this.alloc(LANCZOS4_TABLE.length * 4);
    this.f32.set(LANCZOS4_TABLE, this.lanczosTable / 4);
  }

  private refresh(): void {
    const b = this.k.memory.buffer;
    this.f32 = new Float32Array(b);
    this.f64 = new Float64Array(b);
    this.generation++;
  }

  /** Make the memory at least `bytes` long (views are replaced if it grows). */
  private ensure(bytes: number): void {
    const have = this.k.memory.buffer.byteLength;
    if (bytes <= have) return;
    this.k.memory.grow(Math.ceil((bytes - have) / PAGE));
    this.refresh();
  }

  /** A permanent block of `bytes` (16-byte aligned). */
  alloc(bytes: number): number {
    const at = this.top;
    this.top = at + Math.ceil(bytes / 16) * 16;
    this.ensure(this.top);
    return at;
  }

  /**
   * The scratch area, at least `bytes` long, valid until the next call of alloc or scratch (its
   * contents survive a growth of the memory).
   */
  scratch(bytes: number): number {
    this.ensure(this.top + bytes);
    return this.top;
  }
}

/**
 * Which displacement kernels this process uses, and why: `simd` true for the WebAssembly SIMD kernels;
 * false for the TypeScript fallback (about 3× slower), with `state` saying whether that was asked for
 * (`RHOFIELD_KERNELS=js`), the kernels file is missing, or this Node.js cannot compile it. The CLI
 * warns once on stderr and records it in result.json; a lab script can check it the same way.
 */
export interface KernelStatus {
  readonly simd: boolean;
  readonly state: 'simd' | 'js-requested' | 'wasm-missing' | 'wasm-unsupported';
  /** One line for people, naming the file or the setting. */
  readonly reason: string;
}

let module: object | null | undefined;
let status: KernelStatus | undefined;
let instance: SimdKernels | null = null;

/** Compile kernels.wasm once per thread (null where unavailable or disabled); sets {@link status}. */
function kernelModule(): object | null {
  if (module !== undefined) return module;
  module = null;
  if (process.env['RHOFIELD_KERNELS'] === 'js') {
    status = { simd: false, state: 'js-requested', reason: 'TypeScript kernels, as RHOFIELD_KERNELS=js asks' };
    return module;
  }
  const file = new URL('./kernels.wasm', import.meta.url);
  let bytes: Uint8Array;
  try {
    bytes = readFileSync(file);
  } catch {
    status = {
      simd: false,
      state: 'wasm-missing',
      reason: `the WebAssembly kernels file ${fileURLToPath(file)} is missing: using the TypeScript kernels (about 3× slower); reinstall the package (in a checkout: pnpm build)`,
    };
    return module;
  }
  try {
    module = new wasm.Module(bytes);
    status = { simd: true, state: 'simd', reason: 'WebAssembly SIMD kernels (kernels.wasm)' };
  } catch (e) {
    status = {
      simd: false,
      state: 'wasm-unsupported',
      reason: `${fileURLToPath(file)} cannot be compiled here (${e instanceof Error ? e.message : String(e)}): using the TypeScript kernels (about 3× slower); use Node.js ≥ 20.19 or reinstall the package`,
    };
  }
  return module;
}

/**
 * A new kernel instance with its own memory (one per engine workspace, so two measurements never
 * share kernel memory), or null where unavailable or disabled (`RHOFIELD_KERNELS=js`).
 */
export function createSimdKernels(): SimdKernels | null {
  const m = kernelModule();
  return m ? new SimdKernels(m) : null;
}

/** Which kernels the displacement engine uses in this process (see {@link KernelStatus}). */
export function kernelStatus(): KernelStatus {
  kernelModule();
  return status as KernelStatus;
}

/** This thread's default SIMD kernels, or null where unavailable or disabled (`RHOFIELD_KERNELS=js`). */
export function simdKernels(): SimdKernels | null {
  const m = kernelModule();
  if (m && !instance) instance = new SimdKernels(m);
  return instance;
}
