/** Content hashes of documents: SHA-256 of a canonical JSON form (object keys sorted). */
import { createHash } from 'node:crypto';

export function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_key, v: unknown) => {
    if (v && typeof v === 'object' && !Array.isArray(v)) {
      const out: Record<string, unknown> = {};
      for (const k of Object.keys(v as Record<string, unknown>).sort()) out[k] = (v as Record<string, unknown>)[k];
      return out;
    }
    return v;
  });
}

export function contentHash(...values: unknown[]): string {
  const h = createHash('sha256');
  for (const v of values) h.update(canonicalJson(v)).update('\n');
  return h.digest('hex');
}
