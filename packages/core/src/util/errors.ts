/**
 * Error kinds of the library. The CLI maps them to exit codes (docs/conventions.md):
 * `usage` and `input` → 2, `processing` → 1, `unusable` → 3 (image check verdict only).
 */
export type ErrorKind = 'usage' | 'input' | 'processing' | 'unusable';

/** A library error with a kind the CLI maps to an exit code, and a one-line user message. */
export class RhofieldError extends Error {
  readonly kind: ErrorKind;
  constructor(kind: ErrorKind, message: string) {
    super(message);
    this.name = 'RhofieldError';
    this.kind = kind;
  }
}

function show(v: unknown): string {
  if (v === undefined) return 'nothing';
  if (typeof v === 'string') return JSON.stringify(v);
  if (typeof v === 'number' || typeof v === 'boolean' || v === null || v === undefined) return String(v);
  try {
    const s = JSON.stringify(v);
    return s.length > 80 ? s.slice(0, 77) + '...' : s;
  } catch {
    return String(v);
  }
}

/**
 * One message form: "expected X for Y but received Z", with an optional fix.
 * @example throw invalidParameter('window', 'an integer 16–128 (power of two)', 12)
 */
export function invalidParameter(name: string, expected: string, received: unknown, fix?: string): RhofieldError {
  return new RhofieldError(
    'usage',
    `expected ${expected} for ${name} but received ${show(received)}` + (fix ? `; ${fix}` : ''),
  );
}

/** An input (file/data) error naming the file and what to do. */
export function inputError(message: string): RhofieldError {
  return new RhofieldError('input', message);
}
