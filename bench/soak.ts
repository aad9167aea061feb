/**
 * Soak run: a bounded stream of mixed requests against the service in this process on loopback —
 * lists and summaries, PUT and DELETE of temporary machines, operating-point batches of 1–1000
 * points, inline drivetrains, and invalid requests — from a few concurrent clients. Reports
 * request counts by status and kind, every 5xx (there should be none), answers of an unexpected
 * class, client-side latency by kind, and process memory at start and end.
 *
 * Run alone: `npx tsx bench/soak.ts [seconds]` (default 30 s, at most 60 s). Memory figures are of
 * the whole process (server and clients); run with `node --expose-gc --import tsx` to collect
 * garbage before each memory reading.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { buildApp } from '../src/api/app.js';
import { configFromEnv } from '../src/config.js';
import { describeDrivetrain } from '../src/solver/drivetrain.js';
import { spreadPoints } from './http.js';
import { prng } from './prng.js';

const MAPS_DIR = path.resolve(import.meta.dirname, '../maps');
const HARD_CAP_S = 60;
/** Answer lines kept for the report of each kind of problem (the counts are complete). */
const KEEP_LINES = 50;

export interface SoakOptions {
  /** Length of the run, s (default 30, at most 60). */
  durationS?: number;
  /** Concurrent clients (default 4, at most 32). */
  clients?: number;
  /** Seed of the request mix. */
  seed?: number;
  /** Where the plain result lines go (default console.log). */
  log?: (line: string) => void;
}

export interface MemoryFigures {
  rssMB: number;
  heapUsedMB: number;
}

export interface SoakReport {
  durationS: number;
  requests: number;
  pointsSolved: number;
  byStatus: Record<string, number>;
  byKind: Record<string, { count: number; statuses: Record<string, number>; p50Ms: number; p99Ms: number; maxMs: number }>;
  /** Number of 5xx answers and requests that got no answer. */
  serverErrorCount: number;
  /** The first of them (status, kind, request line, start of the body). */
  serverErrors: string[];
  /** Number of answers in a class the request should not get (e.g. a 4xx for a valid batch). */
  unexpectedCount: number;
  /** The first of them. */
  unexpected: string[];
  memory: { start: MemoryFigures; end: MemoryFigures; peakRssMB: number; gcBeforeReadings: boolean };
}


/** A small invented grid map; `scale` varies the losses between uploads. */
function tempMachine(scale: number) {
  return {
    kind: 'grid',
    description: 'invented soak-test map',
    speedRpm: [0, 2000, 4000, 6000],
    torqueNm: [-60, -30, 0, 30, 60],
    lossW: [0, 1, 2, 3].map((i) => [-60, -30, 0, 30, 60].map((t) => Math.round(scale * (80 + 60 * i + 0.08 * t * t)))),
    maxTorqueNm: [60, 60, 45, 30],
    minTorqueNm: [-60, -60, -45, -30],
    maxSpeedRpm: 6000,
  };
}

type Expect = '2xx' | '4xx' | 'any';

interface Planned {
  kind: string;
  method: string;
  path: string;
  body?: string;
  contentType?: string;
  expect: Expect;
  points?: number;
}

function memory(): MemoryFigures {
  const gc = (globalThis as { gc?: () => void }).gc;
  gc?.();
  const m = process.memoryUsage();
  return { rssMB: m.rss / 2 ** 20, heapUsedMB: m.heapUsed / 2 ** 20 };
}

const quantile = (sorted: number[], q: number) => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))]! : 0);

export async function runSoak(opts: SoakOptions = {}): Promise<SoakReport> {
  const log = opts.log ?? ((line: string) => console.log(line));
  const durationS = Math.min(HARD_CAP_S, Math.max(1, Number.isFinite(opts.durationS) ? opts.durationS! : 30));
  const clients = Math.min(32, Math.max(1, Math.round(opts.clients ?? 4)));
  const rand = prng(opts.seed ?? 20_240_601);

  const dataDir = mkdtempSync(path.join(tmpdir(), 'episplit-soak-'));
  const config = { ...configFromEnv({}), mapsDir: MAPS_DIR, dataDir, host: '127.0.0.1', port: 0 };
  const app = await buildApp({ config, logger: false });
  const peak = { rss: 0 };
  const sampler = setInterval(() => (peak.rss = Math.max(peak.rss, process.memoryUsage().rss)), 250);
  try {
    await app.listen({ host: '127.0.0.1', port: 0 });
    const addr = app.server.address();
    if (!addr || typeof addr === 'string') throw new Error('no loopback address');
    const base = `http://127.0.0.1:${addr.port}`;
    const dt = app.registry.getDrivetrain('van-axle');
    if (!dt) throw new Error(`drivetrain van-axle is not loaded from ${MAPS_DIR}`);
    const facts = describeDrivetrain(dt);
    const pool = spreadPoints(5000, facts.maxWheelSpeedRpm, facts.standstillMaxWheelNm, 3);
    const axleDoc = app.registry.getDrivetrainEntry('van-axle')!.doc;

    const pick = <T>(xs: readonly T[]) => xs[Math.floor(rand() * xs.length)]!;
    const batch = (n: number) => {
      const start = Math.floor(rand() * (pool.length - n));
      return pool.slice(start, start + n);
    };
    const json = (v: unknown) => JSON.stringify(v);
    const temp = () => `soak-tmp-${Math.floor(rand() * 8)}`;
    const invalid: Array<() => Planned> = [
      () => ({ kind: 'invalid', method: 'PUT', path: `/v1/machines/${temp()}`, body: '{"kind":"grid",', contentType: 'application/json', expect: '4xx' }),
      () => ({ kind: 'invalid', method: 'GET', path: '/v1/machines/Bad..Name', expect: '4xx' }),
      () => ({ kind: 'invalid', method: 'POST', path: '/v1/drivetrains/no-such-axle/operating-points', body: json({ points: batch(1) }), contentType: 'application/json', expect: '4xx' }),
      () => ({ kind: 'invalid', method: 'POST', path: '/v1/drivetrains/van-axle/operating-points', body: json({ points: [{ wheelSpeedRpm: 'fast', wheelTorqueNm: 1 }] }), contentType: 'application/json', expect: '4xx' }),
      () => ({ kind: 'invalid', method: 'PUT', path: `/v1/machines/${temp()}`, body: json({ ...tempMachine(1), speedRpm: [0, 4000, 2000, 6000] }), contentType: 'application/json', expect: '4xx' }),
      () => ({ kind: 'invalid', method: 'PUT', path: '/v1/drivetrains/soak-axle', body: json({ ...axleDoc, gearset: { ...axleDoc.gearset, ringTeeth: 79 } }), contentType: 'application/json', expect: '4xx' }),
      () => ({ kind: 'invalid', method: 'POST', path: '/v1/drivetrains/van-axle/operating-points', body: 'points=1', contentType: 'application/x-www-form-urlencoded', expect: '4xx' }),
      () => ({ kind: 'invalid', method: 'DELETE', path: '/v1/machines/sun-machine', expect: '4xx' }),
    ];
    /** The request mix, by weight. */
    const mix: Array<[number, () => Planned]> = [
      [1, () => ({ kind: 'health', method: 'GET', path: '/health', expect: '2xx' })],
      [2, () => ({ kind: 'list', method: 'GET', path: pick(['/v1/machines', '/v1/drivetrains']), expect: '2xx' })],
      [2, () => ({ kind: 'summary', method: 'GET', path: pick(['/v1/machines/sun-machine', '/v1/machines/ring-machine?document=true', '/v1/drivetrains/van-axle']), expect: '2xx' })],
      [1, () => ({ kind: 'temp-get', method: 'GET', path: `/v1/machines/${temp()}`, expect: 'any' })],
      [1, () => ({ kind: 'temp-put', method: 'PUT', path: `/v1/machines/${temp()}`, body: json(tempMachine(1 + rand())), contentType: 'application/json', expect: '2xx' })],
      [1, () => ({ kind: 'temp-delete', method: 'DELETE', path: `/v1/machines/${temp()}`, expect: 'any' })],
      [
        3,
        () => {
          const n = Math.max(1, Math.round(Math.exp(rand() * Math.log(1000))));
          return { kind: 'batch', method: 'POST', path: '/v1/drivetrains/van-axle/operating-points', body: json({ points: batch(n) }), contentType: 'application/json', expect: '2xx', points: n };
        },
      ],
      [1, () => ({ kind: 'inline', method: 'POST', path: '/v1/operating-points', body: json({ drivetrain: axleDoc, points: batch(10) }), contentType: 'application/json', expect: '2xx', points: 10 })],
      [2, () => pick(invalid)()],
    ];
    const totalWeight = mix.reduce((s, [w]) => s + w, 0);
    const plan = (): Planned => {
      let x = rand() * totalWeight;
      for (const [w, f] of mix) if ((x -= w) < 0) return f();
      return mix[0]![1]();
    };

    const byStatus: Record<string, number> = {};
    const kinds: Record<string, { statuses: Record<string, number>; ms: number[] }> = {};
    const serverErrors: string[] = [];
    const unexpected: string[] = [];
    let requests = 0;
    let pointsSolved = 0;
    let serverErrorCount = 0;
    let unexpectedCount = 0;

    const hardStop = { at: performance.now() + (HARD_CAP_S + 10) * 1000 };
    const send = async (p: Planned): Promise<{ status: number; text: string }> => {
      try {
        const res = await fetch(base + p.path, {
          method: p.method,
          ...(p.body !== undefined ? { body: p.body, headers: { 'content-type': p.contentType ?? 'application/json' } } : {}),
          signal: AbortSignal.timeout(Math.floor(Math.min(30_000, Math.max(1000, hardStop.at - performance.now())))),
        });
        return { status: res.status, text: await res.text() };
      } catch (err) {
        return { status: 0, text: err instanceof Error ? err.message : String(err) };
      }
    };

    // One warm-up request of every kind (not counted), then the memory reading the run starts from.
    for (const [, f] of mix) await send(f());
    for (const f of invalid) await send(f());
    const start = memory();
    const t0 = performance.now();
    const deadline = t0 + durationS * 1000;
    hardStop.at = t0 + HARD_CAP_S * 1000;
    const maxRequestsPerClient = 2_000_000;

    const client = async () => {
      for (let i = 0; i < maxRequestsPerClient && performance.now() < deadline; i++) {
        const p = plan();
        const t = performance.now();
        const { status, text } = await send(p);
        const ms = performance.now() - t;
        requests++;
        const key = status === 0 ? 'no answer' : String(status);
        byStatus[key] = (byStatus[key] ?? 0) + 1;
        const k = (kinds[p.kind] ??= { statuses: {}, ms: [] });
        k.statuses[key] = (k.statuses[key] ?? 0) + 1;
        k.ms.push(ms);
        const line = () => `${key} ${p.kind} ${p.method} ${p.path}: ${text.slice(0, 200)}`;
        if (status >= 500 || status === 0) {
          serverErrorCount++;
          if (serverErrors.length < KEEP_LINES) serverErrors.push(line());
        } else if ((p.expect === '2xx' && status >= 300) || (p.expect === '4xx' && (status < 400 || status >= 500))) {
          unexpectedCount++;
          if (unexpected.length < KEEP_LINES) unexpected.push(line());
        } else if (status === 200 && p.points) pointsSolved += p.points;
      }
    };
    await Promise.all(Array.from({ length: clients }, client));
    const elapsedS = (performance.now() - t0) / 1000;
    const end = memory();

    const byKind: SoakReport['byKind'] = {};
    for (const [name, k] of Object.entries(kinds).sort()) {
      const sorted = [...k.ms].sort((a, b) => a - b);
      byKind[name] = { count: sorted.length, statuses: k.statuses, p50Ms: quantile(sorted, 0.5), p99Ms: quantile(sorted, 0.99), maxMs: sorted[sorted.length - 1] ?? 0 };
    }
    const report: SoakReport = {
      durationS: elapsedS,
      requests,
      pointsSolved,
      byStatus,
      byKind,
      serverErrorCount,
      serverErrors,
      unexpectedCount,
      unexpected,
      memory: { start, end, peakRssMB: peak.rss / 2 ** 20, gcBeforeReadings: typeof (globalThis as { gc?: unknown }).gc === 'function' },
    };

    const mb = (m: MemoryFigures) => `rss ${m.rssMB.toFixed(1)} MB, heapUsed ${m.heapUsedMB.toFixed(1)} MB`;
    const statuses = (s: Record<string, number>) => Object.entries(s).sort().map(([k, n]) => `${k}×${n}`).join(' ');
    log(`soak: ${elapsedS.toFixed(1)} s, ${clients} clients, ${requests} requests (${(requests / elapsedS).toFixed(0)}/s), ${pointsSolved} points solved, loopback ${base}`);
    log(`by status: ${statuses(byStatus)}`);
    for (const [name, k] of Object.entries(byKind)) {
      log(`  ${name}: ${k.count} (${statuses(k.statuses)}), latency p50 ${k.p50Ms.toFixed(1)} ms, p99 ${k.p99Ms.toFixed(1)} ms, max ${k.maxMs.toFixed(1)} ms`);
    }
    log(`5xx or no answer: ${serverErrorCount}${serverErrorCount ? '\n  ' + serverErrors.slice(0, 10).join('\n  ') : ''}`);
    log(`unexpected class: ${unexpectedCount}${unexpectedCount ? '\n  ' + unexpected.slice(0, 10).join('\n  ') : ''}`);
    log(`memory at start: ${mb(start)}; at end: ${mb(end)}; peak rss ${report.memory.peakRssMB.toFixed(1)} MB${report.memory.gcBeforeReadings ? ' (gc before readings)' : ' (no gc before readings; run with --expose-gc for that)'}`);
    return report;
  } finally {
    clearInterval(sampler);
    await app.close();
    rmSync(dataDir, { recursive: true, force: true });
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const arg = process.argv[2];
  runSoak(arg ? { durationS: Number(arg) } : {}).then(
    (r) => process.exit(r.serverErrorCount > 0 ? 1 : 0),
    (err: unknown) => {
      console.error(err);
      process.exit(1);
    },
  );
}
