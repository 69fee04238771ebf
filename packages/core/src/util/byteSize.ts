/**
 * Byte sizes as people write them: `2GiB`, `512MiB`, `1.5GB`, `800 MB`, `64k`, or plain bytes.
 * Binary prefixes (KiB, MiB, GiB, TiB) are powers of 1024, SI prefixes (kB, MB, GB, TB) powers of 1000
 * (IEC 80000-13); a bare letter (k, M, G, T) is taken as binary, as in most memory settings.
 */
import { invalidParameter } from './errors.js';

const UNITS: Record<string, number> = {
  '': 1,
  b: 1,
  k: 1024,
  kb: 1e3,
  kib: 1024,
  m: 1024 ** 2,
  mb: 1e6,
  mib: 1024 ** 2,
  g: 1024 ** 3,
  gb: 1e9,
  gib: 1024 ** 3,
  t: 1024 ** 4,
  tb: 1e12,
  tib: 1024 ** 4,
};

/**
 * Parse a byte size.
 * @param text e.g. `2GiB`, `512MiB`, `1.5GB`, `1000000`.
 * @param name how the caller's user named the setting, for the error (e.g. `--max-memory`).
 * @returns whole bytes (> 0).
 * @throws RhofieldError (usage) naming `name` for anything else.
 */
export function parseByteSize(text: string, name = 'size'): number {
  const m = /^\s*(\d+(?:\.\d+)?|\.\d+)\s*([a-zA-Z]*)\s*$/.exec(String(text));
  const unit = m ? UNITS[m[2]!.toLowerCase()] : undefined;
  const bytes = m && unit !== undefined ? Math.round(Number(m[1]) * unit) : NaN;
  if (!(bytes > 0) || !Number.isFinite(bytes)) throw invalidParameter(name, 'a size such as 2GiB, 512MiB, 1.5GB or a number of bytes', text);
  return bytes;
}

/** A byte count for people: binary units with 3 significant digits, e.g. `1.50 GiB`, `300 MiB`. */
export function formatBytes(bytes: number): string {
  const units = ['B', 'KiB', 'MiB', 'GiB', 'TiB'];
  let v = bytes;
  let i = 0;
  while (v >= 1024 && i < units.length - 1) (v /= 1024), i++;
  return `${i === 0 ? String(Math.round(v)) : v.toPrecision(3)} ${units[i]}`;
}
