/**
 * Property-based checks (fast-check) that bad input never crashes: setup parsing on random and mutated
 * JSON values, setup files of mutated text, and image loading on mutated PNG/TIFF bytes. The only
 * allowed outcomes are success or a RhofieldError of kind "usage" or "input" with a one-line message;
 * anything else (a TypeError, a RangeError, a "processing" error, a multi-line message) is a crash.
 *
 * Shared by tests/hostile/fuzz.test.ts (a few hundred runs per property, part of `pnpm test`) and
 * bench/cases/fuzz.ts (the long run: `pnpm bench fuzz`, RHOFIELD_FUZZ_RUNS runs per property).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import fc from 'fast-check';
import { formatPlan, loadImage, loadSetup, parseSetup, planSetup, RhofieldError, saveImage16, setupWarnings, type Field } from '@rhofield/core';
import { png8, tiffDirectoryFirst } from './damagedFiles.js';

/** Outcome counts of one property. */
export interface FuzzReport {
  readonly property: string;
  readonly runs: number;
  readonly accepted: number;
  readonly refused: number;
  readonly crashes: number;
  /** The first crash: its input (shortened) and error. */
  readonly firstCrash?: string;
  readonly seed: number;
}

class Tally {
  accepted = 0;
  refused = 0;
  crashes = 0;
  firstCrash: string | undefined;
  /** Classify a thrown value: a clean refusal, or a crash (recorded). */
  judge(e: unknown, input: () => string): void {
    if (e instanceof RhofieldError && (e.kind === 'usage' || e.kind === 'input') && e.message.length > 0 && !e.message.includes('\n')) {
      this.refused++;
      return;
    }
    this.crashes++;
    this.firstCrash ??= `${input().slice(0, 300)} → ${e instanceof Error ? `${e.name}: ${e.message}` : String(e)}`.slice(0, 600);
  }
  report(property: string, runs: number, seed: number): FuzzReport {
    return { property, runs, accepted: this.accepted, refused: this.refused, crashes: this.crashes, seed, ...(this.firstCrash ? { firstCrash: this.firstCrash } : {}) };
  }
}

/** A valid setup with every optional part, the starting point of the mutations. */
export const BASE_SETUP = {
  camera: { focalLength: 0.1, fNumber: 11, pixelPitch: 5.5e-6, sensorPx: [640, 480] },
  geometry: { lensToBackground: 2.0, flowToBackground: 0.8, originPx: [320, 240] },
  medium: { gas: 'air', wavelength: 5.3e-7, referenceDensity: 1.19, pressure: 101325 },
  flow: { type: 'planar', span: 0.06, reference: 'top' },
  expected: { densityChange: -0.05, lengthScale: 0.01 },
};

type Json = null | boolean | number | string | Json[] | { [k: string]: Json };

/** Every key path of a JSON value (objects and arrays), parents before children. */
function paths(v: Json, prefix: (string | number)[] = []): (string | number)[][] {
  const out: (string | number)[][] = [];
  if (v && typeof v === 'object') {
    for (const [k, c] of Array.isArray(v) ? v.map((c, i) => [i, c] as const) : Object.entries(v)) {
      out.push([...prefix, k]);
      out.push(...paths(c as Json, [...prefix, k]));
    }
  }
  return out;
}
const SETUP_PATHS = paths(BASE_SETUP as unknown as Json);

/** Numbers that break formulas: extremes, zero, negatives, non-finite (a library caller can pass them). */
const nastyNumber = fc.oneof(
  fc.constantFrom(0, -0, -1, 1e300, -1e300, 1e-300, 5e-324, Number.MAX_VALUE, Infinity, -Infinity, NaN, 2 ** 53, 1e21),
  fc.double(),
  fc.integer(),
);
const anyValue: fc.Arbitrary<unknown> = fc.oneof(fc.jsonValue({ maxDepth: 3 }), nastyNumber, fc.constantFrom(undefined, 'auto', 'top', 'air', 'planar', 'axisymmetric', [], {}));

type Mutation = { kind: 'delete' | 'set' | 'add'; at: number; value: unknown; key: string };
const mutation: fc.Arbitrary<Mutation> = fc.record({
  kind: fc.constantFrom('delete', 'set', 'set', 'add'),
  at: fc.nat(SETUP_PATHS.length - 1),
  value: anyValue,
  key: fc.oneof(fc.string({ maxLength: 8 }), fc.constantFrom('gas', 'mixture', 'gladstoneDale', 'type', 'axis', 'axisPosition', 'rectPx', 'temperatureChange', '__proto__', 'constructor')),
});

const NUMBER_PATHS = SETUP_PATHS.filter((p) => typeof p.reduce<unknown>((o, k) => (o as Record<string | number, unknown>)[k], BASE_SETUP) === 'number');

/** A valid-shaped setup whose numbers are each kept (6 in 7) or replaced by ±10^u, u in [−330, 310]: overflow hunting. */
const extremeSetup: fc.Arbitrary<unknown> = fc
  .array(fc.oneof({ weight: 6, arbitrary: fc.constant(null) }, { weight: 1, arbitrary: fc.tuple(fc.double({ min: -330, max: 310, noNaN: true }), fc.boolean()) }), { minLength: NUMBER_PATHS.length, maxLength: NUMBER_PATHS.length })
  .map((choices) => {
    const root = structuredClone(BASE_SETUP) as unknown as Record<string, unknown>;
    choices.forEach((c, i) => {
      if (!c) return;
      const p = NUMBER_PATHS[i]!;
      const parent = p.slice(0, -1).reduce<unknown>((o, k) => (o as Record<string | number, unknown>)[k], root) as Record<string | number, unknown>;
      parent[p[p.length - 1]!] = (c[1] ? -1 : 1) * 10 ** c[0];
    });
    return root;
  });

function applyMutations(base: unknown, ms: readonly Mutation[]): unknown {
  const root = structuredClone(base) as Record<string, unknown>;
  for (const m of ms) {
    const p = SETUP_PATHS[m.at]!;
    let parent: unknown = root;
    for (const k of p.slice(0, -1)) parent = parent && typeof parent === 'object' ? (parent as Record<string | number, unknown>)[k] : undefined;
    if (!parent || typeof parent !== 'object') continue;
    const obj = parent as Record<string | number, unknown>;
    const last = p[p.length - 1]!;
    if (m.kind === 'delete') delete obj[last];
    else if (m.kind === 'set') obj[last] = m.value;
    else if (!Array.isArray(obj)) Object.defineProperty(obj, m.key, { value: m.value, enumerable: true, writable: true, configurable: true });
  }
  return root;
}

/**
 * parseSetup (and, when it passes, setupWarnings and planSetup) on random and mutated values; a printed
 * plan showing Infinity or NaN counts as a crash.
 */
export function fuzzSetupValues(runs: number, seed = 1): FuzzReport {
  const t = new Tally();
  const input = fc.oneof(
    { weight: 1, arbitrary: anyValue },
    { weight: 4, arbitrary: fc.array(mutation, { minLength: 1, maxLength: 4 }).map((ms) => applyMutations(BASE_SETUP, ms)) },
    { weight: 2, arbitrary: extremeSetup },
  );
  fc.check(
    fc.property(input, (v) => {
      try {
        const s = parseSetup(v, 'fuzz.json');
        setupWarnings(s, 'fuzz.json');
        if (s.camera.fNumber !== undefined && s.camera.sensorPx && s.expected) {
          // a plan that is printed must not show non-finite numbers (the "plan prints Infinity" fault)
          const table = formatPlan(planSetup(s));
          if (/Infinity|NaN/.test(table)) throw new Error(`plan printed a non-finite number: ${table.split('\n').find((l) => /Infinity|NaN/.test(l))}`);
        }
        t.accepted++;
      } catch (e) {
        t.judge(e, () => safeJson(v));
      }
    }),
    { numRuns: runs, seed },
  );
  return t.report('setup values (parseSetup, planSetup)', runs, seed);
}

function safeJson(v: unknown): string {
  try {
    return JSON.stringify(v) ?? String(v);
  } catch {
    return String(v);
  }
}

type TextEdit = { at: number; del: number; insert: string };
const textEdit: fc.Arbitrary<TextEdit> = fc.record({
  at: fc.nat(),
  del: fc.nat(12),
  insert: fc.oneof(fc.string({ maxLength: 6 }), fc.constantFrom('{', '}', '[', ']', '"', ',', ':', '\\', '1e400', '-', 'null', '\u0000', '\ufeff', '['.repeat(40))),
});

/** loadSetup on setup files whose text was edited at random (syntax damage, odd characters, nesting). */
export function fuzzSetupFiles(runs: number, seed = 2): FuzzReport {
  const t = new Tally();
  const dir = mkdtempSync(path.join(os.tmpdir(), 'rf-fuzz-setup-'));
  const base = JSON.stringify(BASE_SETUP, null, 2);
  const file = path.join(dir, 'setup.json');
  try {
    fc.check(
      fc.property(fc.array(textEdit, { minLength: 1, maxLength: 5 }), (edits) => {
        let text = base;
        for (const e of edits) {
          const at = e.at % (text.length + 1);
          text = text.slice(0, at) + e.insert + text.slice(at + e.del);
        }
        writeFileSync(file, text);
        try {
          loadSetup(file);
          t.accepted++;
        } catch (e) {
          t.judge(e, () => text);
        }
      }),
      { numRuns: runs, seed },
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return t.report('setup files (loadSetup on edited text)', runs, seed);
}

type ByteEdit = { op: 'flip' | 'zero' | 'cut' | 'insert' | 'copy'; at: number; len: number; byte: number };
const byteEdit: fc.Arbitrary<ByteEdit> = fc.record({
  op: fc.constantFrom('flip', 'flip', 'zero', 'cut', 'insert', 'copy'),
  at: fc.nat(),
  len: fc.integer({ min: 1, max: 64 }),
  byte: fc.integer({ min: 0, max: 255 }),
});

function mutateBytes(src: Buffer, edits: readonly ByteEdit[]): Buffer {
  let b = Buffer.from(src);
  for (const e of edits) {
    if (b.length === 0) break;
    const at = e.at % b.length;
    if (e.op === 'flip') b[at] = b[at]! ^ (e.byte || 1);
    else if (e.op === 'zero') b.fill(0, at, Math.min(b.length, at + e.len));
    else if (e.op === 'cut') b = b.subarray(0, at);
    else if (e.op === 'insert') b = Buffer.concat([b.subarray(0, at), Buffer.alloc(e.len, e.byte), b.subarray(at)]);
    else b = Buffer.concat([b.subarray(0, at), b.subarray(at, at + e.len), b.subarray(at)]);
  }
  return b;
}

/** The valid image files the mutations start from (PNG 8/16-bit, TIFF directory-first and libvips-written). */
export async function baseImages(dir: string): Promise<Record<string, Buffer>> {
  const w = 48;
  const h = 40;
  const samples = Array.from({ length: w * h }, (_, i) => (i * 37 + ((i / w) | 0) * 11) % 256);
  const f: Field = { width: w, height: h, data: Float32Array.from(samples, (v) => v * 257) };
  await saveImage16(f, path.join(dir, 'base16.png'));
  await saveImage16(f, path.join(dir, 'base16.tif'));
  const { readFileSync } = await import('node:fs');
  return {
    'png8': png8(w, h, samples),
    'png16': readFileSync(path.join(dir, 'base16.png')),
    'tiff-directory-first': tiffDirectoryFirst(w, h, samples, 8),
    'tiff16': readFileSync(path.join(dir, 'base16.tif')),
  };
}

/** loadImage on PNG/TIFF files with random byte edits (flips, zeroed runs, cuts, insertions, copies). */
export async function fuzzImages(runs: number, seed = 3): Promise<FuzzReport> {
  const t = new Tally();
  const dir = mkdtempSync(path.join(os.tmpdir(), 'rf-fuzz-image-'));
  try {
    const bases = await baseImages(dir);
    const names = Object.keys(bases);
    let k = 0;
    await fc.check(
      fc.asyncProperty(fc.nat(names.length - 1), fc.array(byteEdit, { minLength: 1, maxLength: 4 }), async (which, edits) => {
        const name = names[which]!;
        const bytes = mutateBytes(bases[name]!, edits);
        const file = path.join(dir, `m${k++ % 8}.${name.startsWith('png') ? 'png' : 'tif'}`);
        writeFileSync(file, bytes);
        try {
          const img = await loadImage(file);
          if (img.field.data.length !== img.width * img.height || !(img.width > 0 && img.height > 0)) throw new Error(`inconsistent image ${img.width}×${img.height} with ${img.field.data.length} values`);
          t.accepted++;
        } catch (e) {
          t.judge(e, () => `${name} ${JSON.stringify(edits)}`);
        }
      }),
      { numRuns: runs, seed },
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return t.report('image files (loadImage on mutated PNG/TIFF bytes)', runs, seed);
}

/** Run the CLI in-process with stdout/stderr captured. */
async function runCli(argv: string[]): Promise<{ code: number; err: string }> {
  const { run } = await import('../../packages/cli/src/main.js');
  let err = '';
  const ow = process.stdout.write.bind(process.stdout);
  const ew = process.stderr.write.bind(process.stderr);
  process.stdout.write = (() => true) as typeof process.stdout.write;
  process.stderr.write = ((s: string | Uint8Array) => ((err += String(s)), true)) as typeof process.stderr.write;
  process.exitCode = undefined;
  try {
    return { code: await run(argv), err };
  } finally {
    process.stdout.write = ow;
    process.stderr.write = ew;
    process.exitCode = undefined;
  }
}

/**
 * The command line on mutated inputs: `plan --setup` on edited setup text and `check` on mutated image
 * bytes. Allowed: exit 0, 3 (check's verdict) or 2 with exactly one "rhofield: error:" line; exit 1 or
 * anything else is a crash.
 */
export async function fuzzCommandLine(runs: number, seed = 4): Promise<FuzzReport> {
  const t = new Tally();
  const dir = mkdtempSync(path.join(os.tmpdir(), 'rf-fuzz-cli-'));
  try {
    const bases = await baseImages(dir);
    const names = Object.keys(bases);
    const base = JSON.stringify(BASE_SETUP, null, 2);
    await fc.check(
      fc.asyncProperty(fc.boolean(), fc.array(textEdit, { minLength: 1, maxLength: 4 }), fc.nat(names.length - 1), fc.array(byteEdit, { minLength: 1, maxLength: 3 }), async (plan, edits, which, bytesEdits) => {
        let argv: string[];
        let input: string;
        if (plan) {
          let text = base;
          for (const e of edits) {
            const at = e.at % (text.length + 1);
            text = text.slice(0, at) + e.insert + text.slice(at + e.del);
          }
          writeFileSync(path.join(dir, 'setup.json'), text);
          argv = ['plan', '--setup', path.join(dir, 'setup.json'), '--quiet'];
          input = text;
        } else {
          const name = names[which]!;
          const file = path.join(dir, `img.${name.startsWith('png') ? 'png' : 'tif'}`);
          writeFileSync(file, mutateBytes(bases[name]!, bytesEdits));
          argv = ['check', file, '--quiet'];
          input = `${name} ${JSON.stringify(bytesEdits)}`;
        }
        const r = await runCli(argv);
        const lines = r.err.trimEnd().split('\n');
        if (r.code === 0 || r.code === 3) t.accepted++;
        else if (r.code === 2 && lines.length === 1 && lines[0]!.startsWith('rhofield: error: ')) t.refused++;
        else {
          t.crashes++;
          t.firstCrash ??= `${argv[0]} ${input.slice(0, 200)} → exit ${r.code}: ${r.err.slice(0, 300)}`;
        }
      }),
      { numRuns: runs, seed },
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return t.report('command line (plan on edited setups, check on mutated images)', runs, seed);
}
