/** Drive cycles: built-in list; energy over a cycle with layout comparison and the cycle-optimal bound. */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';
import { cycleBounds } from '../../vehicle/bound.js';
import { runCycle, type CycleResult } from '../../vehicle/cycleEnergy.js';
import { listBuiltinCycles } from '../../vehicle/cycles.js';
import { compareLayouts } from '../../vehicle/compare.js';
import { parseCycleCsv, parseCycleInput, vehicleSchema, type Cycle } from '../../vehicle/schema.js';
import { plotCycle } from '../../report/svg/plotCycle.js';
import type { Drivetrain } from '../../solver/drivetrain.js';
import type { Mode } from '../../solver/types.js';
import { parseOrThrow } from '../../problem.js';
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
 * Most cycle steps one request may solve, counting every run it asks for (the cycle, the four
 * layouts of a comparison, the bound). Cycles run on the event loop, so this keeps a request to a
 * few seconds; longer jobs belong to the command line (`episplit cycle`).
 */
export const MAX_CYCLE_WORK_STEPS = 100_000;

/** Runs what a cycle request asks for; plain objects only (typed arrays removed). */
export function answerCycle(dt: Drivetrain, body: CycleRequest) {
  const cycle = resolveCycleBody(body.cycle);
  const steps = cycle.timeS.length - 1;
  const runs = 1 + (body.compare ? 4 : 0) + (body.switchCostsWh ? 1 : 0);
  if (steps * runs > MAX_CYCLE_WORK_STEPS) {
    throw new ApiError(
      'too-large',
      `${steps} steps × ${runs} runs exceed the ${MAX_CYCLE_WORK_STEPS} cycle steps one request may solve; drop compare or the bounds, or use the command line`,
      'cycle',
    );
  }
  const solve = body.modes ? { modes: body.modes as Mode[] } : {};
  const result: CycleResult = runCycle(dt, body.vehicle, cycle, {
    solve,
    series: body.series,
    ...(body.usableBatteryWh !== undefined ? { usableBatteryWh: body.usableBatteryWh } : {}),
  });
  delete result.modeEnergyWh;
  delete result.modeIndex;
  return {
    result,
    ...(body.compare ? { comparison: compareLayouts(dt, body.vehicle, cycle, { solve }) } : {}),
    ...(body.switchCostsWh ? { bounds: cycleBounds(dt, body.vehicle, cycle, body.switchCostsWh, { solve }) } : {}),
  };
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
    async (req) => {
      const { dt } = drivetrainOr404(app, req.params.name);
      return app.jobs.run('cycle', () => answerCycle(dt, req.body));
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
      const { dt } = drivetrainOr404(app, req.params.name);
      const svg = await app.jobs.run('cycle', () => {
        const { result } = answerCycle(dt, { ...req.body, compare: false, switchCostsWh: undefined, series: true });
        return plotCycle(result, { title: `${dt.name}: ${result.cycle}` });
      });
      return reply.type('image/svg+xml; charset=utf-8').send(svg);
    },
  );
};
