/**
 * Crash safety of stored documents: the real server runs as a child process, receives many
 * concurrent PUTs of two versions of a few large machine maps, and is killed with SIGKILL in the
 * middle. Restarted on the same DATA_DIR, every stored document must be exactly one of the two
 * versions (never torn, never lost), and no temporary file may remain or show up as a document.
 * The writes are atomic by rename within one folder (POSIX rename(2): the new name refers to either
 * the old or the new file, never to a mixture).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { cpSync, mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import http from 'node:http';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { isDeepStrictEqual } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { freePort } from './support/freePort.js';
import { REPO_MAPS } from './support/server.js';

const REPO_ROOT = path.resolve(import.meta.dirname, '..');
const NAMES = ['crash-0', 'crash-1', 'crash-2'];
/** Concurrent PUTs per round (versions A and B alternate over the names). */
const BURST = 18;
/**
 * When to kill in each round: after this many writes of the burst were answered, plus a pause of
 * `extra` times the duration of one PUT, so that the kill lands at different moments of a write.
 */
const KILL_AT = [
  { answered: 0, extra: 1 },
  { answered: 1, extra: 0.3 },
  { answered: 4, extra: 0.6 },
  { answered: 9, extra: 0 },
];

/**
 * A large invented grid map (about 1 MB of JSON): 240 speeds × 240 torques, loss
 * 60 W + 0.01·n + 0.04·T² + 2e-6·n² scaled by `scale`, envelope 200 N·m to 4000 rpm then constant power.
 */
function bigGrid(version: 'A' | 'B') {
  const scale = version === 'A' ? 1 : 1.1;
  const nS = 240;
  const nT = 240;
  const speedRpm = Array.from({ length: nS }, (_, i) => Math.round((12000 * i) / (nS - 1) * 1000) / 1000);
  const torqueNm = Array.from({ length: nT }, (_, j) => Math.round((-200 + (400 * j) / (nT - 1)) * 1000) / 1000);
  const lossW = speedRpm.map((n) => torqueNm.map((t) => Math.round(scale * (60 + 0.01 * n + 0.04 * t * t + 2e-6 * n * n) * 1000) / 1000));
  const maxTorqueNm = speedRpm.map((n) => (n <= 4000 ? 200 : Math.round(((200 * 4000) / n) * 1000) / 1000));
  return {
    kind: 'grid',
    description: `invented crash-safety map, version ${version}`,
    speedRpm,
    torqueNm,
    lossW,
    maxTorqueNm,
    minTorqueNm: maxTorqueNm.map((t) => -t),
    maxSpeedRpm: 12000,
    reverse: true,
  };
}

const VERSIONS = { A: bigGrid('A'), B: bigGrid('B') };
const TEXT = { A: JSON.stringify(VERSIONS.A), B: JSON.stringify(VERSIONS.B) };

interface Reply {
  status: number;
  text: string;
}

/** One request on a fresh connection (so a kill ends it with an error rather than a hang). */
function request(port: number, method: string, p: string, body?: string): Promise<Reply> {
  return new Promise((resolve, reject) => {
    const headers: Record<string, string | number> = {};
    if (body !== undefined) Object.assign(headers, { 'content-type': 'application/json', 'content-length': Buffer.byteLength(body) });
    const req = http.request({ host: '127.0.0.1', port, method, path: p, headers, agent: false, timeout: 30_000 }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, text: Buffer.concat(chunks).toString('utf8') }));
      res.on('error', reject);
    });
    req.on('timeout', () => req.destroy(new Error(`no answer within 30 s to ${method} ${p}`)));
    req.on('error', reject);
    req.end(body);
  });
}

interface Child {
  proc: ChildProcess;
  port: number;
  log: () => string;
  exited: Promise<void>;
}

const children = new Set<ChildProcess>();

/** `node --import tsx src/server.ts` on a free loopback port; resolves once /health answers. */
async function startChild(mapsDir: string, dataDir: string): Promise<Child> {
  const port = await freePort();
  const proc = spawn(process.execPath, ['--import', 'tsx', 'src/server.ts'], {
    cwd: REPO_ROOT,
    env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', MAPS_DIR: mapsDir, DATA_DIR: dataDir, LOG_LEVEL: 'warn', API_TOKEN: '' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.add(proc);
  let out = '';
  proc.stdout!.on('data', (c: Buffer) => (out += c.toString()));
  proc.stderr!.on('data', (c: Buffer) => (out += c.toString()));
  let gone = false;
  const exited = new Promise<void>((resolve) =>
    proc.once('exit', () => {
      gone = true;
      children.delete(proc);
      resolve();
    }),
  );
  const deadline = Date.now() + 30_000;
  while (Date.now() < deadline) {
    if (gone) throw new Error(`server exited during start-up:\n${out}`);
    try {
      if ((await request(port, 'GET', '/health')).status === 200) return { proc, port, log: () => out, exited };
    } catch {
      // not listening yet
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  proc.kill('SIGKILL');
  throw new Error(`server did not answer /health within 30 s:\n${out}`);
}

/** Which version a parsed document is, or null when it is neither. */
function versionOf(doc: unknown): 'A' | 'B' | null {
  if (isDeepStrictEqual(doc, VERSIONS.A)) return 'A';
  if (isDeepStrictEqual(doc, VERSIONS.B)) return 'B';
  return null;
}

describe('crash safety: SIGKILL during concurrent writes', () => {
  let root: string;
  let mapsDir: string;
  let dataDir: string;
  let srv: Child;

  beforeAll(async () => {
    root = mkdtempSync(path.join(tmpdir(), 'episplit-crash-'));
    mapsDir = path.join(root, 'maps');
    dataDir = path.join(root, 'data');
    cpSync(REPO_MAPS, mapsDir, { recursive: true });
    srv = await startChild(mapsDir, dataDir);
  });

  afterAll(async () => {
    for (const c of children) c.kill('SIGKILL');
    await srv?.exited;
    rmSync(root, { recursive: true, force: true });
  });

  /** Checks the documents on disk and over HTTP of a freshly started server. */
  async function verify(s: Child, label: string): Promise<Record<string, 'A' | 'B'>> {
    const machineDir = path.join(dataDir, 'machines');
    const files = readdirSync(machineDir).sort();
    // Stale temporary files are removed when the registry loads; only the documents remain.
    expect(files, label).toEqual(NAMES.map((n) => `${n}.json`));
    const found: Record<string, 'A' | 'B'> = {};
    for (const n of NAMES) {
      const text = readFileSync(path.join(machineDir, `${n}.json`), 'utf8');
      let doc: unknown;
      expect(() => (doc = JSON.parse(text)), `${label}: ${n}.json is not JSON (torn?)`).not.toThrow();
      const v = versionOf(doc);
      expect(v, `${label}: ${n}.json is neither version A nor B`).not.toBeNull();
      found[n] = v!;
      const r = await request(s.port, 'GET', `/v1/machines/${n}?document=true`);
      expect(r.status, label).toBe(200);
      expect(versionOf(JSON.parse(r.text).document), `${label}: GET ${n}`).toBe(v);
    }
    const ready = JSON.parse((await request(s.port, 'GET', '/ready')).text);
    expect(ready.problems, label).toEqual([]);
    const listed = JSON.parse((await request(s.port, 'GET', '/v1/machines')).text).machines.map((m: { name: string }) => m.name).sort();
    expect(listed, label).toEqual(['ring-machine', ...NAMES, 'sun-machine'].sort());
    return found;
  }

  it('every stored document is exactly version A or B after kills at several moments', async () => {
    // Seed every name with version A and time one write.
    const t0 = performance.now();
    for (const n of NAMES) expect((await request(srv.port, 'PUT', `/v1/machines/${n}`, TEXT.A)).status).toBe(201);
    const putMs = (performance.now() - t0) / NAMES.length;

    const rounds: string[] = [];
    for (const [round, at] of KILL_AT.entries()) {
      const start = performance.now();
      let answered = 0;
      let reached!: () => void;
      const enough = new Promise<void>((r) => (reached = r));
      if (at.answered === 0) reached();
      const puts = Array.from({ length: BURST }, (_, i) => {
        const name = NAMES[i % NAMES.length]!;
        const v = (i + round) % 2 === 0 ? 'B' : 'A';
        return request(srv.port, 'PUT', `/v1/machines/${name}`, TEXT[v]).then(
          (r) => {
            if (++answered === at.answered) reached();
            // 503 "overloaded" is deliberate load shedding (an event-loop delay limit), not a fault.
            const shed = r.status === 503 && /"overloaded"/.test(r.text);
            return { ok: r.status === 200 || r.status === 201, status: shed ? 0 : r.status };
          },
          () => ({ ok: false, status: 0 }),
        );
      });
      // Also go on when every write has ended before enough were answered.
      void Promise.all(puts).then(() => reached());
      await enough;
      await new Promise((r) => setTimeout(r, at.extra * putMs));
      const delayMs = Math.round(performance.now() - start);
      srv.proc.kill('SIGKILL');
      await srv.exited;
      const settled = await Promise.all(puts);
      // An answer other than success, load shedding or a cut connection would be a fault in its own right.
      for (const s of settled) expect([0, 200, 201], srv.log()).toContain(s.status);
      const temps = readdirSync(path.join(dataDir, 'machines')).filter((f) => f.endsWith('.tmp')).length;

      srv = await startChild(mapsDir, dataDir);
      const found = await verify(srv, `round ${round} (kill after ${delayMs} ms)`);
      rounds.push(`kill after ${delayMs} ms: ${settled.filter((s) => s.ok).length}/${BURST} writes answered, ${temps} temp file(s) left, stored ${NAMES.map((n) => found[n]).join('')}`);
    }
    console.info(`one PUT ≈ ${Math.round(putMs)} ms\n${rounds.join('\n')}`);
  });
});
