/**
 * Optional bearer-token auth: when a token is configured, every /v1 route needs
 * `Authorization: Bearer <token>`; /health, /ready, /metrics and the docs stay open.
 * Tokens are compared in constant time (on SHA-256 digests, so lengths do not leak either).
 */
import { createHash, timingSafeEqual } from 'node:crypto';
import type { FastifyInstance } from 'fastify';
import fp from 'fastify-plugin';
import { sendError } from '../errorHandler.js';

function digest(s: string): Buffer {
  return createHash('sha256').update(s, 'utf8').digest();
}

export const authPlugin = fp(async (app: FastifyInstance, opts: { token: string | undefined }) => {
  if (!opts.token) return;
  const expected = digest(opts.token);
  app.addHook('onRequest', async (request, reply) => {
    // Decide on the matched route, not the raw URL: the router decodes the path (`/%761/…`).
    const route = request.routeOptions.url;
    if (route !== undefined && !route.startsWith('/v1/')) return;
    const header = request.headers.authorization ?? '';
    const m = /^Bearer\s+(.+)$/i.exec(header);
    const ok = m !== null && timingSafeEqual(digest(m[1]!.trim()), expected);
    if (!ok) {
      reply.header('www-authenticate', 'Bearer');
      return sendError(reply, 'unauthorized', header ? 'the bearer token is not valid' : 'this route needs Authorization: Bearer <token>');
    }
  });
});
