/**
 * Content hashes for provenance and caches: SHA-256 of a canonical JSON rendering
 * (object keys sorted, typed arrays as plain arrays), so equal inputs hash equally.
 */
import { createHash } from 'node:crypto';

/** Canonical JSON: sorted keys, typed arrays expanded, undefined dropped. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(normalise(value));
}

function normalise(value: unknown): unknown {
  if (value === null || typeof value !== 'object') {
    if (typeof value === 'number' && !Number.isFinite(value)) return String(value);
    return value;
  }
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    return Array.from(value as unknown as ArrayLike<number>, (x) => (Number.isFinite(x) ? x : String(x)));
  }
  if (Array.isArray(value)) return value.map(normalise);
  const out: Record<string, unknown> = {};
  for (const key of Object.keys(value as Record<string, unknown>).sort()) {
    const v = (value as Record<string, unknown>)[key];
    if (v !== undefined) out[key] = normalise(v);
  }
  return out;
}

/** SHA-256 hex digest of a string or bytes. */
export function sha256(data: string | Uint8Array): string {
  return createHash('sha256').update(data).digest('hex');
}

/** SHA-256 of the canonical JSON of any value. */
export function hashOf(value: unknown): string {
  return sha256(canonicalJson(value));
}
