/**
 * The fastify application factory. The process entry (src/server.ts) and tests build the app
 * here; nothing in this file listens on a port.
 */
import { randomUUID } from 'node:crypto';
import fastifySwagger from '@fastify/swagger';
import fastifySwaggerUi from '@fastify/swagger-ui';
import underPressure from '@fastify/under-pressure';
import Fastify, { type FastifyInstance, type FastifyServerOptions } from 'fastify';
import { jsonSchemaTransform, validatorCompiler, type ZodTypeProvider } from 'fastify-type-provider-zod';
import type { Config } from '../config.js';
import { Registry } from '../store/registry.js';
import { installErrorHandling, sendError } from './errorHandler.js';
import { authPlugin } from './plugins/auth.js';
import { jobsPlugin } from './plugins/jobs.js';
import { metricsPlugin } from './plugins/metrics.js';
import { cycleRoutes } from './routes/cycles.js';
import { drivetrainRoutes } from './routes/drivetrains.js';
import { healthRoutes } from './routes/health.js';
import { machineRoutes } from './routes/machines.js';
import { operatingPointRoutes } from './routes/operatingPoints.js';
import { plotRoutes } from './routes/plots.js';
import { tableRoutes } from './routes/tables.js';
import { createTableBuilder, type TableBuilder } from './tableBuilder.js';
import { createWorkerPool, type WorkerPool } from './workerPool.js';

export interface AppOptions {
  config: Config;
  /** A loaded registry; when absent one is created and loaded from the configured folders. */
  registry?: Registry;
  /** Logger setting passed to fastify (default: pino at config.logLevel). */
  logger?: FastifyServerOptions['logger'];
}

export const API_VERSION = '0.1.0';

export async function buildApp(opts: AppOptions): Promise<FastifyInstance> {
  const { config } = opts;
  const app = Fastify({
    logger: opts.logger ?? { level: config.logLevel },
    bodyLimit: config.bodyLimitBytes,
    requestIdHeader: 'x-request-id',
    genReqId: () => randomUUID(),
    // While closing, new requests get the catalogue's 503 from the hook below.
    return503OnClosing: false,
    requestTimeout: config.requestTimeoutMs,
    routerOptions: { ignoreTrailingSlash: true },
    // Malformed URLs and over-long path parameters are refused by the router before the error
    // handler runs; answer them with the catalogue body too.
    frameworkErrors: (err, _req, reply) => {
      void sendError(reply, err.code === 'FST_ERR_MAX_PARAM_LENGTH' ? 'invalid-name' : 'invalid-request', err.message);
    },
  }).withTypeProvider<ZodTypeProvider>();

  app.setValidatorCompiler(validatorCompiler);
  // Response schemas document the API; bodies are serialised with plain JSON.stringify for speed.
  app.setSerializerCompiler(() => (data) => JSON.stringify(data));
  // Graceful close: idle keep-alive connections are closed when close begins (fastify's default);
  // responses sent after that ask the client to drop the connection, so in-flight requests finish
  // and the server still stops.
  let closing = false;
  app.addHook('preClose', async () => {
    closing = true;
  });
  // Hooks on every request take the callback form: no promise per request.
  app.addHook('onRequest', (_request, reply, done) => {
    if (!closing) return done();
    reply.header('connection', 'close').header('retry-after', '5');
    sendError(reply, 'overloaded', 'the service is shutting down; retry on another instance or after it restarts');
  });
  app.addHook('onSend', (request, reply, payload, done) => {
    reply.header('x-request-id', request.id);
    if (closing) reply.header('connection', 'close');
    done(null, payload);
  });
  app.addContentTypeParser(['text/csv', 'text/plain'], { parseAs: 'string' }, (_req, body, done) => done(null, body));

  installErrorHandling(app);
  await app.register(metricsPlugin);
  await app.register(jobsPlugin, { limit: config.maxJobs });
  await app.register(authPlugin, { token: config.apiToken });
  if (config.maxEventLoopDelayMs > 0) {
    await app.register(underPressure, {
      maxEventLoopDelay: config.maxEventLoopDelayMs,
      retryAfter: 5,
      pressureHandler: (_req, reply, type, value) => {
        reply.header('retry-after', '5');
        void sendError(reply, 'overloaded', `the service is overloaded (${type} ${Math.round(Number(value))}); retry after 5 s`);
      },
    });
  }

  const registry = opts.registry ?? new Registry({ mapsDir: config.mapsDir, dataDir: config.dataDir });
  if (!opts.registry) await registry.load();
  app.decorate('registry', registry);
  app.decorate('config', config);
  // One worker pool for the app: large tables, drive cycles and heavy machine builds run on its threads.
  const workers = createWorkerPool();
  app.decorate('workers', workers);
  app.decorate('tables', createTableBuilder(workers));
  app.addHook('onClose', async () => workers.close());

  await app.register(fastifySwagger, {
    openapi: {
      openapi: '3.1.0',
      info: {
        title: 'episplit',
        version: API_VERSION,
        description:
          'Optimal torque split between the sun and ring machines of a planetary electric axle: machine maps, drivetrains, operating points. Units: rpm, N·m, W, Wh, km/h. Informs design and calibration; certifies nothing.',
      },
      tags: [
        { name: 'service', description: 'Liveness, readiness, documentation' },
        { name: 'machines', description: 'Machine (drive unit) efficiency maps' },
        { name: 'drivetrains', description: 'Drivetrain definitions and derived facts' },
        { name: 'solver', description: 'Optimal split at wheel operating points' },
        { name: 'tables', description: 'Controller lookup tables and their plots' },
        { name: 'cycles', description: 'Drive-cycle energy, layout comparison, cycle-optimal bound' },
      ],
    },
    transform: jsonSchemaTransform,
  });
  await app.register(fastifySwaggerUi, { routePrefix: '/docs', staticCSP: true });

  await app.register(healthRoutes);
  await app.register(machineRoutes, { prefix: '/v1' });
  await app.register(drivetrainRoutes, { prefix: '/v1' });
  await app.register(operatingPointRoutes, { prefix: '/v1' });
  await app.register(tableRoutes, { prefix: '/v1' });
  await app.register(plotRoutes, { prefix: '/v1' });
  await app.register(cycleRoutes, { prefix: '/v1' });

  app.get('/openapi.json', { schema: { hide: true } }, async () => app.swagger());
  return app;
}

declare module 'fastify' {
  interface FastifyInstance {
    registry: Registry;
    config: Config;
    tables: TableBuilder;
    workers: WorkerPool;
  }
}
