/**
 * Controller lookup tables: POST a grid, get JSON, CSV or a C header. Identical requests are
 * served from a cache keyed by the content hash of drivetrain, machines and request (ETag).
 * Large tables are built and rendered on the worker pool so the server keeps answering meanwhile.
 */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import { resolveTableSpec, tableSpecSchema } from '../../solver/tableSpec.js';
import { contentHash } from '../../store/hash.js';
import { errorBodySchema, nameParams } from '../schemas.js';
import type { TableBody } from '../tableBuilder.js';
import { BODY_CACHE_CHARS, BodyCache, drivetrainOr404 } from './common.js';

const CONTENT_TYPES = { json: 'application/json; charset=utf-8', csv: 'text/csv; charset=utf-8', c: 'text/x-c; charset=utf-8' } as const;

export const tableRoutes: FastifyPluginAsyncZod = async (app) => {
  const cache = new BodyCache<TableBody>(BODY_CACHE_CHARS);

  app.post(
    '/drivetrains/:name/tables',
    {
      config: { bodyErrorCode: 'table-invalid' },
      schema: {
        tags: ['tables'],
        summary: 'Optimal-split lookup table over a wheel speed × wheel torque grid, with the envelope',
        description:
          'format json (default), csv (long format, one row per cell) or c (C99 header of static const float arrays). Identical requests are answered from a cache; send If-None-Match with the ETag to get 304.',
        params: nameParams,
        body: tableSpecSchema,
        response: {
          200: z.unknown().describe('The table in the requested format'),
          304: z.null().describe('Not modified (ETag matched)'),
          400: errorBodySchema,
          404: errorBodySchema,
          422: errorBodySchema,
          429: errorBodySchema,
        },
      },
    },
    async (req, reply) => {
      const { dt, hash: dtHash } = drivetrainOr404(app, req.params.name);
      const spec = resolveTableSpec(req.body);
      const hash = contentHash(dtHash, spec.spec);
      const etag = `"${hash}"`;
      reply.header('etag', etag).header('x-content-hash', hash);
      if (req.headers['if-none-match'] === etag) return reply.code(304).send(null);
      const hit = cache.get(hash);
      if (hit) return reply.type(hit.contentType).send(hit.body);
      const body = await app.jobs.run('table', () => app.tables.body(dt, dtHash, spec, hash));
      const contentType = CONTENT_TYPES[spec.format];
      cache.set(hash, { body, contentType });
      return reply.type(contentType).send(body);
    },
  );
};

