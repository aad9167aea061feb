/**
 * Process entry: configuration from the environment, the app, listening, and a graceful
 * shutdown on SIGTERM/SIGINT that stops accepting connections and lets in-flight requests finish.
 */
import { pathToFileURL } from 'node:url';
import { buildApp } from './api/app.js';
import { configFromEnv } from './config.js';

export async function startServer(): Promise<void> {
  const config = configFromEnv();
  const app = await buildApp({ config });
  for (const p of app.registry.problems) app.log.warn({ file: p.file, code: p.code, path: p.path }, `not loaded: ${p.message}`);
  let closing = false;
  const shutdown = (signal: string) => {
    if (closing) return;
    closing = true;
    app.log.info({ signal }, 'shutting down: finishing in-flight requests');
    const force = setTimeout(() => {
      app.log.error('in-flight requests did not finish within 25 s; exiting');
      process.exit(1);
    }, 25_000);
    force.unref();
    app.close().then(
      () => process.exit(0),
      (err: unknown) => {
        app.log.error({ err }, 'error while closing');
        process.exit(1);
      },
    );
  };
  process.on('SIGTERM', () => shutdown('SIGTERM'));
  process.on('SIGINT', () => shutdown('SIGINT'));
  await app.listen({ port: config.port, host: config.host });
}

const isMain = process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href;
if (isMain) {
  startServer().catch((err: unknown) => {
    console.error(err);
    process.exit(1);
  });
}
