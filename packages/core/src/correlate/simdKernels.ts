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

/** The compiled module (read-only once set): compiled once per thread, instantiated per workspace. */
let module: object | null | undefined;
/** This thread's default instance (for direct use of the kernels; engines create their own). */
let instance: SimdKernels | null = null;

function compiled(): object | null {
  if (module === undefined) {
    module = null;
    if (process.env['RHOFIELD_KERNELS'] !== 'js') {
      try {
        module = new wasm.Module(readFileSync(new URL('./kernels.wasm', import.meta.url)));
      } catch {
        module = null; // no WebAssembly SIMD here: the TypeScript kernels do the work
      }
    }
  }
  return module;
}

/**
 * A new kernel instance with its own memory (one per engine workspace, so two measurements never
 * share kernel memory), or null where unavailable or disabled (`RHOFIELD_KERNELS=js`).
 */
export function createSimdKernels(): SimdKernels | null {
  const m = compiled();
  return m ? new SimdKernels(m) : null;
}

/** This thread's default SIMD kernels, or null where unavailable or disabled (`RHOFIELD_KERNELS=js`). */
export function simdKernels(): SimdKernels | null {
  const m = compiled();
  if (m && !instance) instance = new SimdKernels(m);
  return instance;
}
