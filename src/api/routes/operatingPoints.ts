/** The optimum at wheel operating points: a batch for a stored drivetrain or one sent inline, or one point by GET. */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import { solvePoints } from '../../solver/point.js';
import type { Drivetrain } from '../../solver/drivetrain.js';
import type { Mode, PointResult } from '../../solver/types.js';
import { ApiError } from '../errors.js';
import { PointAnswers } from '../pointAnswers.js';
import { errorBodySchema, nameParams } from '../schemas.js';
import { pointQuerySchema, pointResultSchema, solveOptionsSchema, wheelPointSchema } from './solverSchemas.js';

const BATCH_BODY_LIMIT = 64 * 1024 * 1024;
/** Large batches are solved in chunks of this many points, yielding to the event loop between them. */
const CHUNK_POINTS = 2000;

/** Batches up to this many points are answered point by point through the kept answers. */
const SMALL_BATCH_POINTS = 64;
const JSON_TYPE = 'application/json; charset=utf-8';

const yieldToEventLoop = () => new Promise<void>((resolve) => setImmediate(resolve));

export const operatingPointRoutes: FastifyPluginAsyncZod = async (app) => {
  const maxPoints = app.config.maxBatchPoints;
  const pointsSchema = z.array(wheelPointSchema).min(1).describe(`Wheel points, at most ${maxPoints} per request`);
  const responses = { 200: z.object({ results: z.array(pointResultSchema) }), 400: errorBodySchema, 404: errorBodySchema, 413: errorBodySchema, 422: errorBodySchema };

  const stored = (name: string): Drivetrain => {
    const dt = app.registry.getDrivetrain(name);
    if (!dt) throw new ApiError('not-found', `no drivetrain named "${name}"`);
    return dt;
  };
  const kept = new PointAnswers(app.config.pointCacheMiB * 1024 * 1024);
  app.metrics.keptAnswers(kept);
  const solveOptions = (modes: Mode[] | undefined, strict: boolean, alternatives: boolean) => (modes ? { modes, strict, alternatives } : { strict, alternatives });

  const answer = async (
    dt: Drivetrain,
    points: Array<{ wheelSpeedRpm: number; wheelTorqueNm: number }>,
    modes: Mode[] | undefined,
    strict: boolean,
    alternatives: boolean,
  ) => {
    if (points.length > maxPoints) {
      throw new ApiError('too-large', `${points.length} points in one request; at most ${maxPoints} are allowed — split the batch`, 'points');
    }
    app.metrics.solverPoints.inc(points.length);
    const opts = solveOptions(modes, strict, alternatives);
    const results: PointResult[] = [];
    for (let i = 0; i < points.length; i += CHUNK_POINTS) {
      if (i > 0) await yieldToEventLoop();
      const chunk = solvePoints(dt, i === 0 && points.length <= CHUNK_POINTS ? points : points.slice(i, i + CHUNK_POINTS), opts);
      for (const r of chunk) results.push(r);
    }
    return { results };
  };

  app.post(
    '/drivetrains/:name/operating-points',
    {
      bodyLimit: BATCH_BODY_LIMIT,
      schema: {
        tags: ['solver'],
        summary: 'Optimal split at wheel points (answers in the same order)',
        params: nameParams,
        body: z.object({ points: pointsSchema, ...solveOptionsSchema }).strict(),
        response: responses,
      },
    },
    async (req, reply) => {
      const { points, modes, strict, alternatives } = req.body;
      const dt = stored(req.params.name);
      if (points.length > SMALL_BATCH_POINTS) return answer(dt, points, modes, strict, alternatives);
      // The text JSON.stringify gives for { results }, put together from the kept answers; fastify
      // sends a string with a JSON content type as it is.
      app.metrics.solverPoints.inc(points.length);
      const opts = solveOptions(modes, strict, alternatives);
      const texts = points.map((p) => kept.answer(dt, p, opts));
      return reply.type(JSON_TYPE).send(`{"results":[${texts.join(',')}]}` as unknown as { results: PointResult[] });
    },
  );

  app.get(
    '/drivetrains/:name/operating-point',
    {
      schema: {
        tags: ['solver'],
        summary: 'Optimal split at one wheel point, given in the query (for simulations stepping point by point)',
        params: nameParams,
        querystring: pointQuerySchema,
        response: { 200: pointResultSchema, 400: errorBodySchema, 404: errorBodySchema },
      },
    },
    async (req, reply) => {
      const q = req.query;
      const dt = stored(req.params.name);
      app.metrics.solverPoints.inc(1);
      return reply.type(JSON_TYPE).send(kept.answer(dt, q, solveOptions(q.modes, q.strict, q.alternatives)) as unknown as PointResult);
    },
  );

  app.post(
    '/operating-points',
    {
      bodyLimit: BATCH_BODY_LIMIT,
      config: { bodyErrorCode: 'invalid-request' },
      schema: {
        tags: ['solver'],
        summary: 'Optimal split for a drivetrain sent inline (machines by name); nothing is stored',
        body: z.object({ drivetrain: z.unknown().describe('A drivetrain document'), points: pointsSchema, ...solveOptionsSchema }).strict(),
        response: responses,
      },
    },
    async (req) => {
      const { dt } = app.registry.buildInline(req.body.drivetrain);
      return answer(dt, req.body.points, req.body.modes, req.body.strict, req.body.alternatives);
    },
  );
};
