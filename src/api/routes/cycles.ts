/**
 * Drive cycles: built-in list; energy over a cycle with layout comparison and the cycle-optimal
 * bound. Requests are checked here (cycle, vehicle, work cap); the solving and the rendering of
 * the body (JSON or SVG) run on the app's worker pool, so the event loop keeps answering other
 * requests meanwhile.
 */
import type { FastifyInstance } from 'fastify';
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import { cycleJobRuns, runCycleJob, type CycleJobAnswer, type CycleJobOptions } from '../../vehicle/cycleJob.js';
import { listBuiltinCycles } from '../../vehicle/cycles.js';
import { parseCycleCsv, parseCycleInput, vehicleSchema, type Cycle, type Vehicle } from '../../vehicle/schema.js';
import type { Drivetrain } from '../../solver/drivetrain.js';
import type { Mode } from '../../solver/types.js';
import { parseOrThrow } from '../../problem.js';
import { cycleBodyPooled } from '../cycleRunner.js';
import type { CycleBodyFormat } from '../cycleWorker.js';
import { ApiError } from '../errors.js';
import { errorBodySchema, nameParams } from '../schemas.js';
import { drivetrainOr404 } from './common.js';
import { cycleAnswerSchema } from './cycleSchemas.js';
import { modeSchema } from './solverSchemas.js';

/** A cycle given as CSV text (columns timeS,speedKph[,gradePct]). */
const csvCycleSchema = z.object({ csv: z.string(), name: z.string().max(200).optional() }).strict();

export const cycleRequestSchema = z
  .object({
    vehicle: vehicleSchema,
    cycle: z
      .unknown()
      .describe('{ "builtin": "nedc" | "demo-delivery" }, or { "timeS": [...], "speedKph": [...], "gradePct"?: [...] }, or { "csv": "timeS,speedKph\\n…" }'),
    compare: z.boolean().default(false).describe('Also run the cycle on restricted layouts (each machine alone, split only, full)'),
    switchCostsWh: z.array(z.number().min(0).max(1e6)).max(8).optional().describe('Cycle-optimal bound by dynamic programming for these costs per mode switch, Wh'),
    series: z.boolean().default(false).describe('Include the per-step series'),
    usableBatteryWh: z.number().positive().optional().describe('Usable battery energy, Wh: the answer then includes the range'),
    modes: z.array(modeSchema).min(1).max(4).optional().describe('Only consider these modes'),
  })
  .strict();

export type CycleRequest = z.output<typeof cycleRequestSchema>;

export function resolveCycleBody(cycle: unknown): Cycle {
  if (typeof cycle === 'object' && cycle !== null && 'csv' in cycle) {
    const doc = parseOrThrow(csvCycleSchema, cycle, 'cycle-invalid', 'cycle');
    return parseCycleCsv(doc.csv, doc.name ?? 'csv', 'cycle');
  }
  return parseCycleInput(cycle, 'cycle');
}

/**
 * Most cycle steps one request may solve, counting every run the job makes (see cycleJobRuns:
 * the cycle, and the layouts of a comparison it is not already; bounds add none). The job runs on
 * a worker thread, but it holds a thread and a job slot while it runs: this keeps a request to a
 * few seconds; longer jobs belong to the command line (`episplit cycle`).
 */
export const MAX_CYCLE_WORK_STEPS = 100_000;

/** A checked cycle request, ready to run in process or on a worker. */
export interface PreparedCycleJob {
  vehicle: Vehicle;
  cycle: Cycle;
  options: CycleJobOptions;
}

/** Resolves the request's cycle and refuses work beyond {@link MAX_CYCLE_WORK_STEPS} (cheap; on the calling thread). */
export function prepareCycleJob(dt: Drivetrain, body: CycleRequest): PreparedCycleJob {
  const cycle = resolveCycleBody(body.cycle);
  const steps = cycle.timeS.length - 1;
  const runs = cycleJobRuns(dt, { compare: body.compare, ...(body.modes ? { modes: body.modes as Mode[] } : {}) });
  if (steps * runs > MAX_CYCLE_WORK_STEPS) {
    throw new ApiError(
      'too-large',
      `${steps} steps × ${runs} runs exceed the ${MAX_CYCLE_WORK_STEPS} cycle steps one request may solve; drop compare, or use the command line`,
      'cycle',
    );
  }
  return {
    vehicle: body.vehicle,
    cycle,
    options: {
      compare: body.compare,
      series: body.series,
      ...(body.modes ? { modes: body.modes as Mode[] } : {}),
      ...(body.switchCostsWh ? { switchCostsWh: body.switchCostsWh } : {}),
      ...(body.usableBatteryWh !== undefined ? { usableBatteryWh: body.usableBatteryWh } : {}),
    },
  };
}

/** Runs what a cycle request asks for, in process; plain objects only. The routes run the same job on a worker. */
export function answerCycle(dt: Drivetrain, body: CycleRequest): CycleJobAnswer {
  const job = prepareCycleJob(dt, body);
  return runCycleJob(dt, job.vehicle, job.cycle, job.options);
}

/** The body of a cycle route, solved and rendered on the app's worker pool (the event loop stays free). */
function pooledBody(app: FastifyInstance, dt: Drivetrain, dtHash: string, job: PreparedCycleJob, format: CycleBodyFormat): Promise<string> {
  return app.jobs.run('cycle', () => cycleBodyPooled(app.workers.get(), dt, job, format, { key: dtHash }));
}

/** Body limit and error codes shared by the routes that take a cycle request. */
const CYCLE_ROUTE = {
  bodyLimit: 16 * 1024 * 1024,
  config: { bodyErrorCode: 'invalid-request', bodyErrorCodes: { vehicle: 'vehicle-invalid', cycle: 'cycle-invalid' } },
} as const;

export const cycleRoutes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/cycles',
    {
      schema: {
        tags: ['cycles'],
        summary: 'Built-in drive cycles',
        response: {
          200: z.object({
            cycles: z.array(
              z.object({ id: z.string(), description: z.string(), durationS: z.number(), distanceKm: z.number(), maxSpeedKph: z.number(), source: z.string() }),
            ),
          }),
        },
      },
    },
    async () => ({ cycles: listBuiltinCycles() }),
  );

  app.post(
    '/drivetrains/:name/cycles',
    {
      ...CYCLE_ROUTE,
      schema: {
        tags: ['cycles'],
        summary: 'Battery energy over a drive cycle: Wh, Wh/km, losses by component, modes, regeneration, unfollowed steps',
        description: 'Optionally compares restricted layouts and gives the cycle-optimal bound (dynamic programming over modes with a cost per switch).',
        params: nameParams,
        body: cycleRequestSchema,
        response: {
          200: cycleAnswerSchema,
          400: errorBodySchema,
          404: errorBodySchema,
          413: errorBodySchema,
          422: errorBodySchema,
          429: errorBodySchema,
        },
      },
    },
    async (req, reply) => {
      const { dt, hash } = drivetrainOr404(app, req.params.name);
      const job = prepareCycleJob(dt, req.body);
      // The worker renders the answer as JSON text (JSON.stringify, as the app's serializer
      // does); fastify sends a string with a JSON content type as it is.
      const body = await pooledBody(app, dt, hash, job, 'json');
      return reply.type('application/json; charset=utf-8').send(body as unknown as CycleJobAnswer);
    },
  );

  app.post(
    '/drivetrains/:name/cycles/plot.svg',
    {
      ...CYCLE_ROUTE,
      schema: {
        tags: ['cycles'],
        summary: 'SVG of a cycle run: speed trace with mode bands, battery power',
        params: nameParams,
        body: cycleRequestSchema,
        response: { 200: z.string().describe('SVG document'), 400: errorBodySchema, 404: errorBodySchema, 413: errorBodySchema, 422: errorBodySchema, 429: errorBodySchema },
      },
    },
    async (req, reply) => {
      const { dt, hash } = drivetrainOr404(app, req.params.name);
      const job = prepareCycleJob(dt, { ...req.body, compare: false, switchCostsWh: undefined, series: true });
      const svg = await pooledBody(app, dt, hash, job, 'svg');
      return reply.type('image/svg+xml; charset=utf-8').send(svg);
    },
  );
};
