/** Starts the real app listening on an ephemeral loopback port, over temporary folders. */
import { cpSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { FastifyInstance } from 'fastify';
import { afterAll, beforeAll } from 'vitest';
import { buildApp } from '../../src/api/app.js';
import { configFromEnv, type Config } from '../../src/config.js';

export const REPO_MAPS = path.resolve(import.meta.dirname, '../../maps');

export interface TestServer {
  app: FastifyInstance;
  url: string;
  dirs: { mapsDir: string; dataDir: string };
  close(): Promise<void>;
}

/** Fresh temporary MAPS_DIR (a copy of the repo's demo maps unless `emptyMaps`) and DATA_DIR. */
export function tempDirs(opts: { emptyMaps?: boolean } = {}): { mapsDir: string; dataDir: string; cleanup(): void } {
  const root = mkdtempSync(path.join(tmpdir(), 'episplit-test-'));
  const mapsDir = path.join(root, 'maps');
  const dataDir = path.join(root, 'data');
  if (!opts.emptyMaps) cpSync(REPO_MAPS, mapsDir, { recursive: true });
  return { mapsDir, dataDir, cleanup: () => rmSync(root, { recursive: true, force: true }) };
}

export async function startServer(dirs: { mapsDir: string; dataDir: string }, overrides: Partial<Config> = {}): Promise<TestServer> {
  const config: Config = { ...configFromEnv({}), ...dirs, port: 0, host: '127.0.0.1', ...overrides };
  const app = await buildApp({ config, logger: false });
  await app.listen({ port: 0, host: '127.0.0.1' });
  const addr = app.server.address();
  if (!addr || typeof addr === 'string') throw new Error('no address');
  return { app, url: `http://127.0.0.1:${addr.port}`, dirs, close: () => app.close() };
}

/**
 * Starts a server over fresh temporary folders before the enclosing describe block's tests and
 * stops it after; read `ctx.srv` / `ctx.dirs` inside the tests.
 */
export function useTestServer(overrides: Partial<Config> = {}): { srv: TestServer; dirs: ReturnType<typeof tempDirs> } {
  const ctx = {} as { srv: TestServer; dirs: ReturnType<typeof tempDirs> };
  beforeAll(async () => {
    ctx.dirs = tempDirs();
    ctx.srv = await startServer(ctx.dirs, overrides);
  });
  afterAll(async () => {
    await ctx.srv.close();
    ctx.dirs.cleanup();
  });
  return ctx;
}
