/**
 * Graceful shutdown: the service, run as its own process, gets SIGTERM while a slow request is in
 * flight; that request still completes with 200, the process then exits 0, and new connections
 * are refused.
 */
import { spawn } from 'node:child_process';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { freePort } from './support/freePort.js';
import { tempDirs } from './support/server.js';

const REPO_ROOT = path.resolve(import.meta.dirname, '..');

async function waitForHealth(base: string, deadline: number): Promise<void> {
  while (Date.now() < deadline) {
    try {
      const r = await fetch(`${base}/health`);
      if (r.ok) return;
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error('server did not come up');
}

describe('graceful shutdown', () => {
  it('lets an in-flight request finish on SIGTERM, then exits 0', async () => {
    const dirs = tempDirs();
    const port = await freePort();
    const base = `http://127.0.0.1:${port}`;
    const proc = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
      cwd: REPO_ROOT,
      env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', MAPS_DIR: dirs.mapsDir, DATA_DIR: dirs.dataDir, LOG_LEVEL: 'info', API_TOKEN: '' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let output = '';
    proc.stdout.on('data', (c: Buffer) => (output += c.toString()));
    proc.stderr.on('data', (c: Buffer) => (output += c.toString()));
    const exited = new Promise<number | null>((resolve) => proc.once('exit', (code) => resolve(code)));
    try {
      await waitForHealth(base, Date.now() + 30_000);
      // A batch large enough to take a while (solved in chunks, so the signal arrives mid-request).
      const points = Array.from({ length: 40_000 }, (_, i) => ({ wheelSpeedRpm: (i % 800) * 2, wheelTorqueNm: ((i * 7919) % 4000) - 2000 }));
      const slow = fetch(`${base}/v1/drivetrains/van-axle/operating-points`, {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ points }),
      });
      // Signal once the server has logged the incoming batch (it is then in flight).
      const seen = Date.now() + 20_000;
      while (!output.includes('"url":"/v1/drivetrains/van-axle/operating-points"')) {
        if (Date.now() > seen) throw new Error('the batch request was never logged');
        await new Promise((r) => setTimeout(r, 20));
      }
      proc.kill('SIGTERM');
      const res = await slow;
      expect(res.status).toBe(200);
      const body = (await res.json()) as { results: unknown[] };
      expect(body.results).toHaveLength(40_000);
      expect(await exited).toBe(0);
      await expect(fetch(`${base}/health`)).rejects.toThrow();
      expect(output).toMatch(/shutting down/);
    } finally {
      if (proc.exitCode === null) proc.kill('SIGKILL');
      dirs.cleanup();
    }
  });
});
