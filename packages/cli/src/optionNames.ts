/**
 * Library parameter names → the command-line options a user typed. The library reports bad values as
 * "expected X for <parameter> but received Z" with its own names (windowPx, flowFreeRegionPx, format);
 * at the command line the message must name the option instead. The names mean the same option in
 * every command that takes them.
 */
export const OPTION_FOR_PARAMETER: Readonly<Record<string, string>> = {
  windowPx: '--window',
  stepPx: '--step',
  passes: '--passes',
  threads: '--threads',
  flowFreeRegionPx: '--flow-free',
  mask: '--mask',
  format: '--format',
  'format list': '--format',
  sizePx: '--size',
  field: '--field',
  fill: '--fill',
  noisePx: '--noise',
  dpi: '--dpi',
  widthMm: '--figure-width',
  'figure width': '--figure-width',
  angle: '--angle',
};

/** Library names that cannot be mistaken for ordinary words (camelCase): replaced wherever they occur. */
const CODE_NAMES = Object.keys(OPTION_FOR_PARAMETER).filter((k) => /[a-z][A-Z]/.test(k));
const CODE_NAME_RE = new RegExp(`\\b(${CODE_NAMES.join('|')})\\b`, 'g');

/**
 * Rewrite "… for <library name> but received …" to name the option, and camelCase library names
 * anywhere in the message (e.g. "flowFreeRegionPx [5000, …] contains no valid vector"); other messages
 * are unchanged.
 */
export function withOptionNames(message: string): string {
  const m = /^(expected .*? for )([A-Za-z][\w ]*?)( but received .*)$/s.exec(message);
  const opt = m ? OPTION_FOR_PARAMETER[m[2]!] : undefined;
  const named = m && opt ? m[1] + opt + m[3] : message;
  return named.replace(CODE_NAME_RE, (k) => OPTION_FOR_PARAMETER[k]!);
}
