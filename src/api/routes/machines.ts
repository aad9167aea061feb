/** Machine map documents: list, summary, create or replace (JSON or CSV), delete. */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import { parseMachineCsv } from '../../machine/csv.js';
import { machineDocSchema } from '../../machine/schema.js';
import { machineListItem, type MachineEntry } from '../../store/registry.js';
import { ApiError } from '../errors.js';
import { pooledMachineBuilder } from '../machineRunner.js';
import { errorBodySchema, nameParams } from '../schemas.js';

const peak = z.object({ efficiency: z.number(), speedRpm: z.number(), torqueNm: z.number() }).nullable();

const machineSummarySchema = z.object({
  name: z.string(),
  kind: z.enum(['grid', 'points', 'dq-model']),
  origin: z.enum(['maps', 'data']).describe('maps: shipped in MAPS_DIR (read-only); data: uploaded'),
  hash: z.string().describe('SHA-256 of the document'),
  description: z.string().optional(),
  summary: z.object({
    grid: z.object({ speedNodes: z.number(), torqueNodes: z.number(), cells: z.number() }),
    speedRangeRpm: z.object({ max: z.number(), reverse: z.boolean() }),
    maxTorqueNm: z.number(),
    minTorqueNm: z.number(),
    maxPowerW: z.number(),
    maxRegenPowerW: z.number(),
    peakEfficiency: z.object({ motoring: peak, generating: peak }),
    filledShare: z.number().describe('Share of grid cells filled from neighbours'),
    extrapolatedShare: z.number().describe('Share of grid cells outside the measured region'),
    zeroSpeedSymmetry: z.object({ lossChangeW: z.number(), torqueChangeNm: z.number() }),
    fit: z.object({ rmsW: z.number(), r2: z.number(), terms: z.number(), points: z.number() }).nullable(),
    notes: z.array(z.string()),
  }),
});

function view(e: MachineEntry) {
  return {
    name: e.name,
    kind: e.doc.kind,
    origin: e.origin,
    hash: e.hash,
    ...(e.doc.description ? { description: e.doc.description } : {}),
    summary: e.summary,
  };
}

export const machineRoutes: FastifyPluginAsyncZod = async (app) => {
  // Points fits, dq models and large grids are built on the app's worker pool.
  const build = pooledMachineBuilder(app.workers);

  app.get(
    '/machines',
    {
      schema: {
        tags: ['machines'],
        summary: 'List machine maps',
        response: {
          200: z.object({
            machines: z.array(
              z.object({
                name: z.string(),
                kind: z.string(),
                origin: z.enum(['maps', 'data']),
                maxTorqueNm: z.number(),
                maxPowerW: z.number(),
                maxSpeedRpm: z.number(),
                peakEfficiency: z.object({ motoring: peak, generating: peak }),
              }),
            ),
          }),
        },
      },
    },
    async () => ({ machines: app.registry.listMachines().map(machineListItem) }),
  );

  app.get(
    '/machines/:name',
    {
      schema: {
        tags: ['machines'],
        summary: 'Summary of one machine map (add ?document=true for the stored document)',
        params: nameParams,
        querystring: z.object({ document: z.enum(['true', 'false']).default('false') }),
        response: { 200: machineSummarySchema.extend({ document: z.unknown().optional() }), 400: errorBodySchema, 404: errorBodySchema },
      },
    },
    async (req) => {
      const e = app.registry.getMachine(req.params.name);
      if (!e) throw new ApiError('not-found', `no machine named "${req.params.name}"`);
      return req.query.document === 'true' ? { ...view(e), document: e.doc } : view(e);
    },
  );

  app.put(
    '/machines/:name',
    {
      config: { bodyErrorCode: 'map-invalid' },
      schema: {
        tags: ['machines'],
        summary: 'Create or replace a machine map',
        description:
          'JSON document of kind grid, points or dq-model; or CSV (Content-Type: text/csv) with ?kind=grid|points. Validated and built before it is written; written atomically under DATA_DIR.',
        params: nameParams,
        querystring: z.object({ kind: z.enum(['grid', 'points']).optional().describe('Map kind of a CSV body') }),
        body: machineDocSchema,
        response: { 200: machineSummarySchema, 201: machineSummarySchema, 400: errorBodySchema, 413: errorBodySchema, 415: errorBodySchema, 422: errorBodySchema },
      },
      preValidation: async (req) => {
        if (typeof req.body !== 'string') return;
        const kind = (req.query as { kind?: string }).kind;
        if (kind !== 'grid' && kind !== 'points') {
          throw new ApiError('invalid-request', 'a CSV body needs ?kind=grid or ?kind=points', 'kind');
        }
        req.body = parseMachineCsv(req.body, kind) as typeof req.body;
      },
    },
    async (req, reply) => {
      // The body was validated against the machine schema by the route (JSON, or CSV turned into a document).
      const { created, entry } = await app.registry.putMachineDoc(req.params.name, req.body, build);
      return reply.code(created ? 201 : 200).send(view(entry));
    },
  );

  app.delete(
    '/machines/:name',
    {
      schema: {
        tags: ['machines'],
        summary: 'Delete an uploaded machine map (a shipped map of the same name comes back)',
        params: nameParams,
        response: { 204: z.null().describe('Deleted'), 404: errorBodySchema, 409: errorBodySchema },
      },
    },
    async (req, reply) => {
      await app.registry.deleteMachine(req.params.name);
      return reply.code(204).send(null);
    },
  );
};
