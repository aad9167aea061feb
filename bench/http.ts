/**
 * HTTP throughput of the service on loopback: `GET /health` against a single-point
 * `POST /v1/drivetrains/van-axle/operating-points` (autocannon, load generator in a worker thread,
 * interleaved in rounds so that all see the same machine load) with two point mixes: a spread over
 * the whole speed × torque box (a third of the points beyond the limits, the costly answers) and
 * the wheel demand of an invented delivery van over the NEDC (what a vehicle simulation asks);
 * then a 10 000-point batch over HTTP against the same points solved in process.
 *
 * Run alone: `npx tsx bench/http.ts`. Figures are ratios within one run; absolute rates depend on
 * the machine and on whatever else runs on it.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import autocannon from 'autocannon';
import { buildApp } from '../src/api/app.js';
import { configFromEnv } from '../src/config.js';
import { describeDrivetrain } from '../src/solver/drivetrain.js';
import { solvePoints, type WheelPoint } from '../src/solver/point.js';
import { radSToRpm } from '../src/units.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { cycleWheelDemand } from '../src/vehicle/roadLoad.js';
import { parseVehicle } from '../src/vehicle/schema.js';
import { prng } from './prng.js';
import { median } from './stats.js';

const MAPS_DIR = path.resolve(import.meta.dirname, '../maps');
const DRIVETRAIN = 'van-axle';

export interface HttpBenchOptions {
  /** Seconds of load per endpoint, split over the rounds (default 10, at most 60). */
  durationS?: number;
  /** Interleaved rounds per endpoint (default 2). */
  rounds?: number;
  /** Concurrent connections (default 4). */
  connections?: number;
  /** Points in the batch comparison (default 10 000, at most 200 000). */
  batchPoints?: number;
  /** Timed repetitions of the batch, median reported (default 3, at most 9). */
  batchRepeats?: number;
  /** Where the plain result lines go (default console.log). */
  log?: (line: string) => void;
}

export interface LoadFigures {
  /** Requests answered per second over all rounds. */
  reqPerS: number;
  /** Largest p99 latency of the rounds, ms. */
  p99Ms: number;
  /** Median latency of the rounds' medians, ms. */
  p50Ms: number;
  requests: number;
  non2xx: number;
  errors: number;
  timeouts: number;
}

export interface Figures {
  health: LoadFigures;
  singlePoint: LoadFigures;
  /** singlePoint.reqPerS / health.reqPerS (target >= 0.5). */
  singlePointToHealth: number;
  /** Single points from a drive cycle's wheel demand. */
  cyclePoint: LoadFigures;
  cyclePointToHealth: number;
  /** The drive-cycle points with `alternatives: false`. */
  leanPoint: LoadFigures;
  leanPointToHealth: number;
  batch: {
    points: number;
    /** Median time from sending the request to the last byte of the answer, ms. */
    httpMs: number;
    /** Median time to parse the answer on the client, ms (not included in httpMs). */
    clientParseMs: number;
    /** Median time of `solvePoints` over the same points in this process, ms. */
    inProcessMs: number;
    /** httpMs / inProcessMs (target <= 10). */
    ratio: number;
    httpRunsMs: number[];
    inProcessRunsMs: number[];
  };
}


/**
 * Wheel points spread over the drivetrain's working range: speed 0–95 % of its top wheel speed,
 * torque from 60 % of the standstill limit braking to 90 % motoring (some points beyond the
 * envelope at speed, as a simulation would ask).
 */
export function spreadPoints(n: number, maxWheelSpeedRpm: number, maxWheelNm: number, seed = 1): WheelPoint[] {
  const r = prng(seed);
  return Array.from({ length: n }, () => ({
    wheelSpeedRpm: Math.round(r() * 0.95 * maxWheelSpeedRpm * 10) / 10,
    wheelTorqueNm: Math.round((-0.6 + 1.5 * r()) * maxWheelNm * 10) / 10,
  }));
}

const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));

function cannon(opts: autocannon.Options): Promise<autocannon.Result> {
  return new Promise((resolve, reject) => {
    autocannon(opts, (err, result) => (err ? reject(err) : resolve(result)));
  });
}

function combine(results: autocannon.Result[]): LoadFigures {
  const requests = results.reduce((s, r) => s + r.requests.total, 0);
  const seconds = results.reduce((s, r) => s + r.duration, 0);
  return {
    reqPerS: requests / seconds,
    p99Ms: Math.max(...results.map((r) => r.latency.p99)),
    p50Ms: median(results.map((r) => r.latency.p50)),
    requests,
    non2xx: results.reduce((s, r) => s + r.non2xx, 0),
    errors: results.reduce((s, r) => s + r.errors, 0),
    timeouts: results.reduce((s, r) => s + r.timeouts, 0),
  };
}

export async function runHttpBench(opts: HttpBenchOptions = {}): Promise<Figures> {
  const log = opts.log ?? ((line: string) => console.log(line));
  const durationS = clamp(opts.durationS ?? 10, 1, 60);
  const rounds = clamp(Math.round(opts.rounds ?? 2), 1, 10);
  const connections = clamp(Math.round(opts.connections ?? 4), 1, 64);
  const batchPoints = clamp(Math.round(opts.batchPoints ?? 10_000), 1, 200_000);
  const batchRepeats = clamp(Math.round(opts.batchRepeats ?? 3), 1, 9);
  const roundS = Math.max(1, Math.round(durationS / rounds));

  const dataDir = mkdtempSync(path.join(tmpdir(), 'episplit-bench-'));
  const config = { ...configFromEnv({}), mapsDir: MAPS_DIR, dataDir, host: '127.0.0.1', port: 0, maxBatchPoints: Math.max(200_000, batchPoints) };
  const app = await buildApp({ config, logger: false });
  try {
    await app.listen({ host: '127.0.0.1', port: 0 });
    const addr = app.server.address();
    if (!addr || typeof addr === 'string') throw new Error('no loopback address');
    const base = `http://127.0.0.1:${addr.port}`;
    const dt = app.registry.getDrivetrain(DRIVETRAIN);
    if (!dt) throw new Error(`drivetrain ${DRIVETRAIN} is not loaded from ${MAPS_DIR}`);
    const facts = describeDrivetrain(dt);

    const route = `/v1/drivetrains/${DRIVETRAIN}/operating-points`;
    const single = spreadPoints(256, facts.maxWheelSpeedRpm, facts.standstillMaxWheelNm, 7).map((p) => ({
      method: 'POST' as const,
      path: route,
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ points: [p] }),
    }));
    // The NEDC wheel demand of an invented 2.6 t delivery van (our own demo scenario).
    const van = parseVehicle({ massKg: 2600, rotatingMassFactor: 0.05, rollingResistance: 0.011, dragAreaM2: 1.9, auxiliaryW: 400 });
    const demand = cycleWheelDemand(van, getBuiltinCycle('nedc'), dt.wheelRadiusM);
    const cycleRequests = (extra: object) =>
      Array.from({ length: demand.steps }, (_, k) => ({
        method: 'POST' as const,
        path: route,
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify({ points: [{ wheelSpeedRpm: radSToRpm(demand.wheelSpeedRadS[k]!), wheelTorqueNm: demand.wheelTorqueNm[k]! }], ...extra }),
      }));
    const fromCycle = cycleRequests({});
    const common = { url: base, connections, workers: 1 };
    const health = { ...common, requests: [{ method: 'GET' as const, path: '/health' }] };
    const point = { ...common, requests: single };
    const cyclePoint = { ...common, requests: fromCycle };
    const leanPoint = { ...common, requests: cycleRequests({ alternatives: false }) };

    log(`http bench: loopback ${base}, ${connections} connections, ${rounds} × ${roundS} s per endpoint (interleaved), load generator in a worker thread`);
    // Warm-up (JIT, connection set-up); not counted.
    await cannon({ ...health, duration: 1 });
    await cannon({ ...point, duration: 1 });
    await cannon({ ...cyclePoint, duration: 1 });
    await cannon({ ...leanPoint, duration: 1 });
    const h: autocannon.Result[] = [];
    const s: autocannon.Result[] = [];
    const c: autocannon.Result[] = [];
    const l: autocannon.Result[] = [];
    for (let i = 0; i < rounds; i++) {
      h.push(await cannon({ ...health, duration: roundS }));
      s.push(await cannon({ ...point, duration: roundS }));
      c.push(await cannon({ ...cyclePoint, duration: roundS }));
      l.push(await cannon({ ...leanPoint, duration: roundS }));
    }
    const healthFig = combine(h);
    const pointFig = combine(s);
    const cycleFig = combine(c);
    const leanFig = combine(l);
    const ratio = pointFig.reqPerS / healthFig.reqPerS;
    const cycleRatio = cycleFig.reqPerS / healthFig.reqPerS;
    const leanRatio = leanFig.reqPerS / healthFig.reqPerS;
    const line = (label: string, f: LoadFigures) =>
      `${label}: ${f.reqPerS.toFixed(0)} req/s, p50 ${f.p50Ms.toFixed(1)} ms, p99 ${f.p99Ms.toFixed(1)} ms (worst round), ${f.requests} requests, non-2xx ${f.non2xx}, errors ${f.errors}, timeouts ${f.timeouts}`;
    log(line('GET /health', healthFig));
    log(line(`POST ${route} (1 point, spread over the speed × torque box, 256 rotating bodies)`, pointFig));
    log(line(`POST ${route} (1 point, NEDC wheel demand of the demo van, ${fromCycle.length} rotating bodies)`, cycleFig));
    log(line(`POST ${route} (the same drive-cycle points, "alternatives": false)`, leanFig));
    log(`single point / health: spread ${ratio.toFixed(2)}, drive-cycle points ${cycleRatio.toFixed(2)}, without alternatives ${leanRatio.toFixed(2)} (target >= 0.5)`);

    // Batch: HTTP end to end against the solver in process, same points, median of the repeats.
    const points = spreadPoints(batchPoints, facts.maxWheelSpeedRpm, facts.standstillMaxWheelNm, 11);
    const body = JSON.stringify({ points });
    const httpRuns: number[] = [];
    const parseRuns: number[] = [];
    const procRuns: number[] = [];
    const postBatch = async () => {
      const t0 = performance.now();
      const res = await fetch(base + route, { method: 'POST', headers: { 'content-type': 'application/json' }, body });
      const text = await res.text();
      const ms = performance.now() - t0;
      if (res.status !== 200) throw new Error(`batch answered ${res.status}: ${text.slice(0, 300)}`);
      const t1 = performance.now();
      const n = (JSON.parse(text) as { results: unknown[] }).results.length;
      if (n !== batchPoints) throw new Error(`batch answered ${n} results for ${batchPoints} points`);
      return { ms, parseMs: performance.now() - t1 };
    };
    await postBatch();
    solvePoints(dt, points);
    for (let i = 0; i < batchRepeats; i++) {
      const r = await postBatch();
      httpRuns.push(r.ms);
      parseRuns.push(r.parseMs);
      const t0 = performance.now();
      const out = solvePoints(dt, points);
      procRuns.push(performance.now() - t0);
      if (out.length !== batchPoints) throw new Error('in-process solve lost points');
    }
    const batch = {
      points: batchPoints,
      httpMs: median(httpRuns),
      clientParseMs: median(parseRuns),
      inProcessMs: median(procRuns),
      ratio: median(httpRuns) / median(procRuns),
      httpRunsMs: httpRuns,
      inProcessRunsMs: procRuns,
    };
    const runs = (xs: number[]) => xs.map((x) => x.toFixed(0)).join(', ');
    log(`${batchPoints}-point batch over HTTP: ${batch.httpMs.toFixed(0)} ms median of ${batchRepeats} (${runs(httpRuns)}), client JSON parse ${batch.clientParseMs.toFixed(0)} ms more`);
    log(`${batchPoints} points in process (solvePoints): ${batch.inProcessMs.toFixed(0)} ms median of ${batchRepeats} (${runs(procRuns)})`);
    log(`HTTP / in process: ${batch.ratio.toFixed(2)} (target <= 10)`);
    return { health: healthFig, singlePoint: pointFig, singlePointToHealth: ratio, cyclePoint: cycleFig, cyclePointToHealth: cycleRatio, leanPoint: leanFig, leanPointToHealth: leanRatio, batch };
  } finally {
    await app.close();
    rmSync(dataDir, { recursive: true, force: true });
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  runHttpBench().catch((err: unknown) => {
    console.error(err);
    process.exit(1);
  });
}
