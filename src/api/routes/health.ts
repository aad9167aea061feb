/** Liveness and readiness. `/health` never needs a token. */
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod';
import { z } from 'zod';

export const healthRoutes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '/health',
    {
      schema: {
        tags: ['service'],
        summary: 'Liveness: the process answers',
        response: { 200: z.object({ status: z.literal('ok') }) },
      },
    },
    async () => ({ status: 'ok' as const }),
  );

  app.get(
    '/ready',
    {
      schema: {
        tags: ['service'],
        summary: 'Readiness: maps loaded (lists files that could not be loaded)',
        response: {
          200: z.object({
            status: z.literal('ready'),
            machines: z.number().int(),
            drivetrains: z.number().int(),
            problems: z.array(z.object({ file: z.string(), code: z.string(), message: z.string(), path: z.string().optional() })),
          }),
          503: z.object({ status: z.literal('loading') }),
        },
      },
    },
    async (_req, reply) => {
      const r = app.registry;
      if (!r.ready) return reply.code(503).send({ status: 'loading' as const });
      return {
        status: 'ready' as const,
        machines: r.listMachines().length,
        drivetrains: r.listDrivetrains().length,
        problems: r.problems.map((p) => ({ ...p, file: p.file.split('/').slice(-2).join('/') })),
      };
    },
  );
};
