/**
 * A cap on concurrent heavy jobs (tables, cycles, sweeps): beyond it the service answers 429
 * with a clear message instead of queueing without bound.
 */
import type { FastifyInstance } from 'fastify';
import fp from 'fastify-plugin';
import { ApiError } from '../errors.js';

export interface JobLimiter {
  readonly running: number;
  readonly limit: number;
  run<T>(kind: string, fn: () => Promise<T> | T): Promise<T>;
}

export function createJobLimiter(limit: number, observe?: (kind: string, seconds: number) => void): JobLimiter {
  let running = 0;
  return {
    get running() {
      return running;
    },
    limit,
    async run<T>(kind: string, fn: () => Promise<T> | T): Promise<T> {
      if (running >= limit) {
        throw new ApiError('too-many-jobs', `${running} table/cycle jobs are running (limit ${limit}); retry when one finishes`);
      }
      running++;
      const t0 = process.hrtime.bigint();
      try {
        return await fn();
      } finally {
        running--;
        observe?.(kind, Number(process.hrtime.bigint() - t0) / 1e9);
      }
    },
  };
}

export const jobsPlugin = fp(async (app: FastifyInstance, opts: { limit: number }) => {
  app.decorate(
    'jobs',
    createJobLimiter(opts.limit, (kind, s) => app.metrics?.jobSeconds.observe({ kind }, s)),
  );
});

declare module 'fastify' {
  interface FastifyInstance {
    jobs: JobLimiter;
  }
}
