/** The optimum at wheel operating points: a batch for a stored drivetrain or one sent inline, or one point by GET. */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import { solvePoint, solvePoints } from '../../solver/point.js';
import type { Drivetrain } from '../../solver/drivetrain.js';
import type { Mode, PointResult } from '../../solver/types.js';
import { ApiError } from '../errors.js';
import { errorBodySchema, nameParams } from '../schemas.js';
import { pointQuerySchema, pointResultSchema, solveOptionsSchema, wheelPointSchema } from './solverSchemas.js';

const BATCH_BODY_LIMIT = 64 * 1024 * 1024;
/** Large batches are solved in chunks of this many points, yielding to the event loop between them. */
const CHUNK_POINTS = 2000;

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
    async (req) => answer(stored(req.params.name), req.body.points, req.body.modes, req.body.strict, req.body.alternatives),
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
    async (req) => {
      const q = req.query;
      const dt = stored(req.params.name);
      app.metrics.solverPoints.inc(1);
      return solvePoint(dt, q.wheelSpeedRpm, q.wheelTorqueNm, solveOptions(q.modes, q.strict, q.alternatives));
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
