/** SVG plots computed server-side: a drivetrain's table and a machine's efficiency map. */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import { plotMachine } from '../../report/svg/plotMachine.js';
import { plotTable } from '../../report/svg/plotTable.js';
import { describeDrivetrain } from '../../solver/drivetrain.js';
import { resolveTableSpec } from '../../solver/tableSpec.js';
import { parseModeText } from '../../solver/modes.js';
import { contentHash } from '../../store/hash.js';
import { ApiError } from '../errors.js';
import { errorBodySchema, nameParams } from '../schemas.js';
import { axisFromQuery, BODY_CACHE_CHARS, BodyCache, drivetrainOr404 } from './common.js';

const SVG = 'image/svg+xml; charset=utf-8';

export const plotRoutes: FastifyPluginAsyncZod = async (app) => {
  const cache = new BodyCache(BODY_CACHE_CHARS);

  app.get(
    '/drivetrains/:name/plot.svg',
    {
      schema: {
        tags: ['tables'],
        summary: 'System efficiency and mode regions of the optimal-split table, with the envelope (SVG)',
        params: nameParams,
        querystring: z.object({
          speedRpm: z.string().optional().describe('Wheel speed axis: from:to:steps or a list (default 0 to the top wheel speed, 81 steps)'),
          torqueNm: z.string().optional().describe('Wheel torque axis: from:to:steps or a list (default ± the standstill limit, 81 steps)'),
          modes: z.string().optional().describe('Comma-separated modes to allow'),
          modeSwitchMarginW: z.coerce.number().min(0).max(1e7).default(0),
        }),
        response: { 200: z.string().describe('SVG document'), 400: errorBodySchema, 404: errorBodySchema, 422: errorBodySchema, 429: errorBodySchema },
      },
    },
    async (req, reply) => {
      const { dt, hash: dtHash } = drivetrainOr404(app, req.params.name);
      const facts = describeDrivetrain(dt);
      const tmax = Math.ceil(Math.max(facts.standstillMaxWheelNm, 1));
      const modes = req.query.modes ? parseModeText(req.query.modes, 'modes') : undefined;
      const spec = resolveTableSpec(
        {
          speedRpm: axisFromQuery(req.query.speedRpm, 'speedRpm', { from: 0, to: Math.floor(facts.maxWheelSpeedRpm), steps: 81 }),
          torqueNm: axisFromQuery(req.query.torqueNm, 'torqueNm', { from: -tmax, to: tmax, steps: 81 }),
          ...(modes ? { modes } : {}),
          modeSwitchMarginW: req.query.modeSwitchMarginW,
        },
        201 * 201,
      );
      const hash = contentHash(dtHash, spec.spec, 'svg');
      reply.header('etag', `"${hash}"`);
      const hit = cache.get(hash);
      if (hit) return reply.type(SVG).send(hit.body);
      const table = await app.jobs.run('table', () => app.tables.build(dt, dtHash, spec, hash));
      const body = plotTable(table, { title: `${dt.name}: optimal split` });
      cache.set(hash, { body, contentType: SVG });
      return reply.type(SVG).send(body);
    },
  );

  app.get(
    '/machines/:name/plot.svg',
    {
      schema: {
        tags: ['machines'],
        summary: 'Efficiency contours of a machine map with its envelope (SVG)',
        params: nameParams,
        response: { 200: z.string().describe('SVG document'), 400: errorBodySchema, 404: errorBodySchema },
      },
    },
    async (req, reply) => {
      const e = app.registry.getMachine(req.params.name);
      if (!e) throw new ApiError('not-found', `no machine named "${req.params.name}"`);
      const key = `${e.hash}:machine-svg`;
      const hit = cache.get(key);
      if (hit) return reply.type(SVG).send(hit.body);
      const body = plotMachine(e.map, { title: `${e.name}: efficiency map` });
      cache.set(key, { body, contentType: SVG });
      return reply.type(SVG).send(body);
    },
  );
};
