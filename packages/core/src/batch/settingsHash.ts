/**
 * Run-manifest hashing: a batch folder belongs to one set of settings. The settings are serialised
 * canonically (object keys sorted, `undefined` dropped) and hashed with SHA-256, so that the same
 * settings always give the same hash whatever the key order.
 */
import { createHash } from 'node:crypto';

/** Canonical JSON: object keys sorted recursively, undefined members dropped; arrays keep order. */
export function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== 'object') {
    if (typeof value === 'number' && !Number.isFinite(value)) return JSON.stringify(String(value));
    return JSON.stringify(value) ?? 'null';
  }
  if (Array.isArray(value)) return '[' + value.map((v) => canonicalJson(v === undefined ? null : v)).join(',') + ']';
  const keys = Object.keys(value as Record<string, unknown>)
    .filter((k) => (value as Record<string, unknown>)[k] !== undefined)
    .sort();
  return '{' + keys.map((k) => JSON.stringify(k) + ':' + canonicalJson((value as Record<string, unknown>)[k])).join(',') + '}';
}

/** SHA-256 (hex) of the canonical JSON of `settings`. */
export function settingsHash(settings: unknown): string {
  return createHash('sha256').update(canonicalJson(settings)).digest('hex');
}
