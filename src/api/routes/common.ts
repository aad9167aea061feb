/** Small helpers shared by routes. */
import type { FastifyInstance } from 'fastify';
import type { Drivetrain } from '../../solver/drivetrain.js';
import { parseAxisText } from '../../solver/tableSpec.js';
import { ApiError } from '../errors.js';
import { SizedLru } from '../sizedLru.js';

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
export class BodyCache<B extends string | Buffer = string> extends SizedLru<CachedBody<B>> {
  constructor(maxChars: number) {
    super(maxChars, (_key, value) => value.body.length, maxChars / 4);
  }
}

/** Size of each route's body cache, characters. */
export const BODY_CACHE_CHARS = 64 * 1024 * 1024;

/** An axis from the query string (see parseAxisText), or the fallback when absent. */
export function axisFromQuery(text: string | undefined, field: string, fallback: { from: number; to: number; steps: number }): { from: number; to: number; steps: number } | number[] {
  return text === undefined || text === '' ? fallback : parseAxisText(text, field);
}
