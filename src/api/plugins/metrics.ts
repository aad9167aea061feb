/**
 * Prometheus metrics at /metrics (prom-client, one registry per app): request counts and
 * latency by route, solver points answered, and table and cycle job durations.
 */
import type { FastifyInstance } from 'fastify';
import fp from 'fastify-plugin';
import { collectDefaultMetrics, Counter, Gauge, Histogram, Registry } from 'prom-client';

/** What the kept single-point answers report (see PointAnswers). */
export interface KeptAnswerCounts {
  readonly hits: number;
  readonly misses: number;
  readonly size: number;
}

export interface Metrics {
  registry: Registry;
  solverPoints: Counter;
  jobSeconds: Histogram<'kind'>;
  /** Reports a store of kept point answers at each scrape. */
  keptAnswers(counts: KeptAnswerCounts): void;
}

export const metricsPlugin = fp(async (app: FastifyInstance) => {
  const registry = new Registry();
  collectDefaultMetrics({ register: registry });
  const requests = new Counter({
    name: 'episplit_http_requests_total',
    help: 'HTTP requests by route, method and status',
    labelNames: ['route', 'method', 'status'] as const,
    registers: [registry],
  });
  const latency = new Histogram({
    name: 'episplit_http_request_duration_seconds',
    help: 'HTTP request latency by route and method',
    labelNames: ['route', 'method'] as const,
    buckets: [0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30],
    registers: [registry],
  });
  const solverPoints = new Counter({ name: 'episplit_solver_points_total', help: 'Wheel points solved through the API', registers: [registry] });
  const jobSeconds = new Histogram({
    name: 'episplit_job_duration_seconds',
    help: 'Duration of table and cycle jobs',
    labelNames: ['kind'] as const,
    buckets: [0.01, 0.05, 0.1, 0.5, 1, 2, 5, 10, 30, 60, 120],
    registers: [registry],
  });
  const keptAnswers = (counts: KeptAnswerCounts) => {
    new Counter({
      name: 'episplit_point_answers_total',
      help: 'Single-point answers by source: kept from an earlier request, or solved',
      labelNames: ['source'] as const,
      registers: [registry],
      collect() {
        this.reset();
        this.inc({ source: 'kept' }, counts.hits);
        this.inc({ source: 'solved' }, counts.misses);
      },
    });
    new Gauge({
      name: 'episplit_point_answers_kept',
      help: 'Single-point answers kept for reuse',
      registers: [registry],
      collect() {
        this.set(counts.size);
      },
    });
  };
  app.decorate('metrics', { registry, solverPoints, jobSeconds, keptAnswers } satisfies Metrics);

  app.addHook('onResponse', (request, reply, done) => {
    const route = request.routeOptions.url ?? 'unmatched';
    requests.inc({ route, method: request.method, status: String(reply.statusCode) });
    latency.observe({ route, method: request.method }, reply.elapsedTime / 1000);
    done();
  });

  app.get('/metrics', { schema: { hide: true } }, async (_req, reply) => {
    reply.type(registry.contentType);
    return registry.metrics();
  });
});

declare module 'fastify' {
  interface FastifyInstance {
    metrics: Metrics;
  }
}
