/** Small helpers shared by routes. */
import type { FastifyInstance } from 'fastify';
import type { Drivetrain } from '../../solver/drivetrain.js';
import { parseAxisText } from '../../solver/tableSpec.js';
import { ApiError } from '../errors.js';

/** The built drivetrain and its content hash (document + machines), or a 404. */
export function drivetrainOr404(app: FastifyInstance, name: string): { dt: Drivetrain; hash: string } {
  const entry = app.registry.getDrivetrainEntry(name);
  const dt = entry && app.registry.getDrivetrain(name);
  if (!entry || !dt) throw new ApiError('not-found', `no drivetrain named "${name}"`);
  return { dt, hash: app.registry.drivetrainContentHash(entry) };
}

/** A rendered response body: text, or its UTF-8 bytes (bodies rendered on a worker thread). */
export interface CachedBody<B extends string | Buffer = string> {
  body: B;
  contentType: string;
}

/**
 * A least-recently-used cache of rendered bodies keyed by content hash, bounded by total size
 * (characters of text, bytes of byte bodies); a body larger than a quarter of the bound is not kept.
 */
export class BodyCache<B extends string | Buffer = string> {
  private readonly map = new Map<string, CachedBody<B>>();
  private size = 0;
  constructor(private readonly maxChars: number) {}
  get(key: string): CachedBody<B> | undefined {
    const hit = this.map.get(key);
    if (hit) {
      this.map.delete(key);
      this.map.set(key, hit);
    }
    return hit;
  }
  set(key: string, value: CachedBody<B>): void {
    if (value.body.length > this.maxChars / 4) return;
    const old = this.map.get(key);
    if (old) {
      this.size -= old.body.length;
      this.map.delete(key);
    }
    this.map.set(key, value);
    this.size += value.body.length;
    for (const [k, v] of this.map) {
      if (this.size <= this.maxChars) break;
      this.map.delete(k);
      this.size -= v.body.length;
    }
  }
}

/** Size of each route's body cache, characters. */
export const BODY_CACHE_CHARS = 64 * 1024 * 1024;

/** An axis from the query string (see parseAxisText), or the fallback when absent. */
export function axisFromQuery(text: string | undefined, field: string, fallback: { from: number; to: number; steps: number }): { from: number; to: number; steps: number } | number[] {
  return text === undefined || text === '' ? fallback : parseAxisText(text, field);
}
