/**
 * HTTP throughput of the service on loopback. The server is the compiled build in a child
 * process (`node dist/server.js`, as `npm start` runs it; build first); autocannon loads it from
 * this process, one autocannon per connection so that each connection sends its own sequence. In
 * each round every endpoint gets the same time, one after the other, so all see the same machine
 * load; each figure is the median over rounds of the ratio against `GET /health` in the same round.
 * Single points by GET: a spread over the speed × torque box with every point new (about a third
 * beyond the limits); the NEDC wheel demand of an invented delivery van, a new payload each pass,
 * with and without alternatives (repeats only where the cycle repeats itself: standstill,
 * cruise); and 256 points over and over (every answer kept from before). By POST: the spread, new
 * points, one per body. Beside throughput, the server's own CPU time per request (from its
 * /metrics) gives the cost ratio, which is what the throughput ratio tends to when the server alone
 * is the bottleneck. Then a 10 000-point batch over HTTP against the same points solved in this
 * process.
 *
 * Run alone: `npm run build && npx tsx bench/http.ts [--connections N] [--rounds N] [--seconds S]`. Figures are ratios within one run;
 * absolute rates depend on the machine and on whatever else runs on it.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import autocannon from 'autocannon';
import { freePort } from '../test/support/freePort.js';
import { Registry } from '../src/store/registry.js';
import { describeDrivetrain } from '../src/solver/drivetrain.js';
import { solvePoints, type WheelPoint } from '../src/solver/point.js';
import { radSToRpm } from '../src/units.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { cycleWheelDemand } from '../src/vehicle/roadLoad.js';
import { parseVehicle } from '../src/vehicle/schema.js';
import { prng } from './prng.js';
import { median } from './stats.js';

const ROOT = path.resolve(import.meta.dirname, '..');
const MAPS_DIR = path.join(ROOT, 'maps');
const SERVER = path.join(ROOT, 'dist/server.js');
const DRIVETRAIN = 'van-axle';

export interface HttpBenchOptions {
  /** Rounds (default 6, at most 20). */
  rounds?: number;
  /** Seconds of load per endpoint and round (default 1.5, 0.5 to 10). */
  roundS?: number;
  /** Concurrent connections (default 4). */
  connections?: number;
  /** Points in the batch comparison (default 10 000, at most 200 000). */
  batchPoints?: number;
  /** Timed repetitions of the batch, median reported (default 3, at most 9). */
  batchRepeats?: number;
  /** Also time the batch (default true). */
  batch?: boolean;
  /** Where the plain result lines go (default console.log). */
  log?: (line: string) => void;
}

export interface EndpointFigures {
  label: string;
  /** Requests answered per second, all rounds together. */
  reqPerS: number;
  /** Median over rounds of this endpoint's req/s divided by /health's in the same round. */
  toHealth: number;
  /** Server CPU time per request, µs (median over rounds). */
  cpuUsPerReq: number;
  /** /health's CPU per request divided by this endpoint's (median over rounds). */
  costToHealth: number;
  /** Share of the single-point answers taken from the kept ones (NaN when none were asked). */
  keptShare: number;
  p50Ms: number;
  /** Largest p99 latency of the rounds, ms. */
  p99Ms: number;
  requests: number;
  non2xx: number;
  errors: number;
  timeouts: number;
}

export interface Figures {
  endpoints: EndpointFigures[];
  batch?: {
    points: number;
    /** Median time from sending the request to the last byte of the answer, ms. */
    httpMs: number;
    /** Median time to parse the answer on the client, ms (not included in httpMs). */
    clientParseMs: number;
    /** Median time of `solvePoints` over the same points in this process, ms. */
    inProcessMs: number;
    /** httpMs / inProcessMs (target <= 10). */
    ratio: number;
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

/**
 * The NEDC wheel demand, step by step, of an invented 2 t delivery van (our own demo scenario)
 * carrying `payloadKg` more, on wheels of the given radius (m).
 */
export function nedcVanPass(wheelRadiusM: number, payloadKg: number): WheelPoint[] {
  const van = parseVehicle({ massKg: 2000 + payloadKg, rotatingMassFactor: 0.05, rollingResistance: 0.011, dragAreaM2: 1.9, auxiliaryW: 400 });
  const demand = cycleWheelDemand(van, getBuiltinCycle('nedc'), wheelRadiusM);
  return Array.from({ length: demand.steps }, (_, k) => ({ wheelSpeedRpm: radSToRpm(demand.wheelSpeedRadS[k]!), wheelTorqueNm: demand.wheelTorqueNm[k]! }));
}

const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));

function cannon(opts: autocannon.Options): Promise<autocannon.Result> {
  return new Promise((resolve, reject) => {
    autocannon(opts, (err, result) => (err ? reject(err) : resolve(result)));
  });
}

/**
 * Loads `url` for `seconds` with one autocannon per stream, each one connection sending its own
 * requests in order (autocannon walks one list from the start on every connection, so given one
 * list four connections would ask the same thing at the same moment).
 */
export function loadPerConnection(url: string, streams: autocannon.Request[][], seconds: number): Promise<autocannon.Result[]> {
  return Promise.all(streams.map((requests) => cannon({ url, connections: 1, duration: seconds, requests })));
}

/** GET of one wheel point on the demo drivetrain, with more query text if given. */
export function pointGet(p: WheelPoint, extra = ''): autocannon.Request {
  return { method: 'GET', path: `/v1/drivetrains/${DRIVETRAIN}/operating-point?wheelSpeedRpm=${p.wheelSpeedRpm}&wheelTorqueNm=${p.wheelTorqueNm}${extra}` };
}

interface ServerCounters {
  cpuS: number;
  /** Single-point answers taken from the kept ones, and solved. */
  kept: number;
  solved: number;
}

/** The server's CPU seconds and single-point answer counts so far, read from its Prometheus metrics. */
async function serverCounters(base: string): Promise<ServerCounters> {
  const text = await (await fetch(`${base}/metrics`)).text();
  const read = (name: string) => {
    const m = new RegExp(`^${name.replace(/[{}"]/g, (c) => `\\${c}`)}\\s+([0-9.eE+-]+)$`, 'm').exec(text);
    if (!m) throw new Error(`${name} is missing from /metrics`);
    return Number(m[1]);
  };
  return { cpuS: read('process_cpu_seconds_total'), kept: read('episplit_point_answers_total{source="kept"}'), solved: read('episplit_point_answers_total{source="solved"}') };
}

/** Starts the compiled server (with extra node options, if any) and waits until it is ready. */
export async function startServer(port: number, dataDir: string, maxBatchPoints: number, nodeArgs: string[] = []): Promise<ChildProcess> {
  const child = spawn(process.execPath, [...nodeArgs, SERVER], {
    env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', MAPS_DIR, DATA_DIR: dataDir, LOG_LEVEL: 'warn', MAX_BATCH_POINTS: String(maxBatchPoints) },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  const deadline = Date.now() + 30_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`the server exited with ${child.exitCode} (run npm run build first)`);
    try {
      if ((await fetch(`http://127.0.0.1:${port}/ready`)).status === 200) return child;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) {
      child.kill('SIGKILL');
      throw new Error('the server did not get ready within 30 s');
    }
    await new Promise((r) => setTimeout(r, 100));
  }
}

/**
 * An endpoint's load: for round r (-1 is the warm-up) and connection c, the requests that
 * connection sends in order. Each connection gets its own sequence (autocannon would otherwise
 * walk one list from the start on every connection, so they would ask the same points at the same
 * moment), and each round its own points, so answers kept from an earlier request are only reused
 * where the workload itself repeats.
 */
interface Endpoint {
  label: string;
  requests: (round: number, connection: number) => autocannon.Request[];
}

interface RoundFigure {
  rps: number;
  cpuUs: number;
  kept: number;
  solved: number;
  requests: number;
  duration: number;
  p50: number;
  p99: number;
  non2xx: number;
  errors: number;
  timeouts: number;
}

export async function runHttpBench(opts: HttpBenchOptions = {}): Promise<Figures> {
  const log = opts.log ?? ((line: string) => console.log(line));
  const rounds = clamp(Math.round(opts.rounds ?? 6), 1, 20);
  const roundS = clamp(opts.roundS ?? 1.5, 0.5, 10);
  const connections = clamp(Math.round(opts.connections ?? 4), 1, 64);
  const batchPoints = clamp(Math.round(opts.batchPoints ?? 10_000), 1, 200_000);
  const batchRepeats = clamp(Math.round(opts.batchRepeats ?? 3), 1, 9);

  // The same drivetrain in this process, for the points and the in-process baseline.
  const dataDir = mkdtempSync(path.join(tmpdir(), 'episplit-bench-'));
  const registry = new Registry({ mapsDir: MAPS_DIR, dataDir });
  await registry.load();
  const dt = registry.getDrivetrain(DRIVETRAIN);
  if (!dt) throw new Error(`drivetrain ${DRIVETRAIN} is not loaded from ${MAPS_DIR}`);
  const facts = describeDrivetrain(dt);

  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const child = await startServer(port, dataDir, Math.max(200_000, batchPoints));
  try {
    const batchRoute = `/v1/drivetrains/${DRIVETRAIN}/operating-points`;
    const oneRoute = `/v1/drivetrains/${DRIVETRAIN}/operating-point`;
    const post = (p: WheelPoint) => ({ method: 'POST' as const, path: batchRoute, headers: { 'content-type': 'application/json' }, body: JSON.stringify({ points: [p] }) });
    // More requests per connection and round than one connection answers in a round at 10 000 req/s.
    const perStream = Math.ceil(roundS * 10_000);
    const stream = (round: number, c: number) => 1 + (round + 1) * connections + c;
    const spread = (round: number, c: number, salt: number) => spreadPoints(perStream, facts.maxWheelSpeedRpm, facts.standstillMaxWheelNm, 7919 * stream(round, c) + salt);
    // One NEDC pass per payload: passes share only the standstill points, and every repeat is one
    // the cycle itself makes (idle, cruise).
    const vanPass = (j: number) => nedcVanPass(dt.wheelRadiusM, j);
    const passLength = vanPass(0).length;
    const passesPerStream = Math.ceil(perStream / passLength);
    const nedc = (round: number, c: number) => Array.from({ length: passesPerStream }, (_, i) => vanPass(stream(round, c) * passesPerStream + i)).flat();
    const fixedSpread = spreadPoints(256, facts.maxWheelSpeedRpm, facts.standstillMaxWheelNm, 7);
    const endpoints: Endpoint[] = [
      { label: 'GET /health', requests: () => [{ method: 'GET', path: '/health' }] },
      { label: `GET ${oneRoute} (spread over the speed × torque box, every point new)`, requests: (r, c) => spread(r, c, 1).map((p) => pointGet(p)) },
      { label: `POST ${batchRoute} (spread, every point new, 1 point per body)`, requests: (r, c) => spread(r, c, 2).map(post) },
      { label: `GET ${oneRoute} (NEDC wheel demand of the demo van, ${passLength} steps a pass, a new payload each pass)`, requests: (r, c) => nedc(r, c).map((p) => pointGet(p)) },
      { label: `GET ${oneRoute} (the same drive-cycle passes, alternatives=false)`, requests: (r, c) => nedc(r, c).map((p) => pointGet(p, '&alternatives=false')) },
      { label: `GET ${oneRoute} (the same 256 points over and over: kept answers)`, requests: () => fixedSpread.map((p) => pointGet(p)) },
    ];

    log(`http bench: server ${SERVER} (child process) on ${base}; autocannon in this process, ${connections} connection${connections === 1 ? '' : 's'}, each its own request sequence; ${rounds} rounds × ${roundS} s per endpoint`);
    const run = async (e: Endpoint, round: number, seconds: number): Promise<RoundFigure> => {
      const streams = Array.from({ length: connections }, (_, c) => e.requests(round, c));
      const c0 = await serverCounters(base);
      const results = await loadPerConnection(base, streams, seconds);
      const c1 = await serverCounters(base);
      const requests = results.reduce((s, x) => s + x.requests.total, 0);
      const duration = Math.max(...results.map((x) => x.duration));
      return {
        rps: requests / duration,
        cpuUs: ((c1.cpuS - c0.cpuS) * 1e6) / Math.max(1, requests),
        kept: c1.kept - c0.kept,
        solved: c1.solved - c0.solved,
        requests,
        duration,
        p50: median(results.map((x) => x.latency.p50)),
        p99: Math.max(...results.map((x) => x.latency.p99)),
        non2xx: results.reduce((s, x) => s + x.non2xx, 0),
        errors: results.reduce((s, x) => s + x.errors, 0),
        timeouts: results.reduce((s, x) => s + x.timeouts, 0),
      };
    };
    for (const e of endpoints) await run(e, -1, 1); // warm-up: JIT, connections; not counted
    const per: RoundFigure[][] = endpoints.map(() => []);
    for (let r = 0; r < rounds; r++) for (let i = 0; i < endpoints.length; i++) per[i]!.push(await run(endpoints[i]!, r, roundS));

    const health = per[0]!;
    const figures: EndpointFigures[] = endpoints.map((e, i) => {
      const rs = per[i]!;
      const requests = rs.reduce((s, x) => s + x.requests, 0);
      return {
        label: e.label,
        reqPerS: requests / rs.reduce((s, x) => s + x.duration, 0),
        toHealth: median(rs.map((x, k) => x.rps / health[k]!.rps)),
        cpuUsPerReq: median(rs.map((x) => x.cpuUs)),
        costToHealth: median(rs.map((x, k) => health[k]!.cpuUs / x.cpuUs)),
        keptShare: rs.reduce((s, x) => s + x.kept, 0) / rs.reduce((s, x) => s + x.kept + x.solved, 0),
        p50Ms: median(rs.map((x) => x.p50)),
        p99Ms: Math.max(...rs.map((x) => x.p99)),
        requests,
        non2xx: rs.reduce((s, x) => s + x.non2xx, 0),
        errors: rs.reduce((s, x) => s + x.errors, 0),
        timeouts: rs.reduce((s, x) => s + x.timeouts, 0),
      };
    });
    for (const f of figures) {
      log(
        `${f.label}: ${f.reqPerS.toFixed(0)} req/s, ${f.toHealth.toFixed(2)} of /health; server CPU ${f.cpuUsPerReq.toFixed(0)} µs/request, cost ratio ${f.costToHealth.toFixed(2)}; ` +
          (Number.isNaN(f.keptShare) ? '' : `answers kept from before ${(100 * f.keptShare).toFixed(0)} %; `) +
          `p50 ${f.p50Ms.toFixed(1)} ms, p99 ${f.p99Ms.toFixed(1)} ms (worst round); ${f.requests} requests, non-2xx ${f.non2xx}, errors ${f.errors}, timeouts ${f.timeouts}`,
      );
    }
    const single = figures.slice(1);
    log(`single point / health, median of rounds (target >= 0.5): ${single.map((f) => f.toHealth.toFixed(2)).join(', ')} (in the order above); cost ratios ${single.map((f) => f.costToHealth.toFixed(2)).join(', ')}`);

    if (opts.batch === false) return { endpoints: figures };
    // Batch: HTTP end to end against the solver in this process, same points, median of the repeats.
    const points = spreadPoints(batchPoints, facts.maxWheelSpeedRpm, facts.standstillMaxWheelNm, 11);
    const body = JSON.stringify({ points });
    const httpRuns: number[] = [];
    const parseRuns: number[] = [];
    const procRuns: number[] = [];
    const postBatch = async () => {
      const t0 = performance.now();
      const res = await fetch(base + batchRoute, { method: 'POST', headers: { 'content-type': 'application/json' }, body });
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
    };
    const runs = (xs: number[]) => xs.map((x) => x.toFixed(0)).join(', ');
    log(`${batchPoints}-point batch over HTTP: ${batch.httpMs.toFixed(0)} ms median of ${batchRepeats} (${runs(httpRuns)}), client JSON parse ${batch.clientParseMs.toFixed(0)} ms more`);
    log(`${batchPoints} points in process (solvePoints): ${batch.inProcessMs.toFixed(0)} ms median of ${batchRepeats} (${runs(procRuns)})`);
    log(`HTTP / in process: ${batch.ratio.toFixed(2)} (target <= 10)`);
    return { endpoints: figures, batch };
  } finally {
    child.kill('SIGTERM');
    await new Promise((r) => (child.exitCode !== null ? r(null) : child.once('exit', r)));
    rmSync(dataDir, { recursive: true, force: true });
  }
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  // Alone: `npx tsx bench/http.ts [--connections N] [--rounds N] [--seconds S]`.
  const arg = (name: string) => {
    const i = process.argv.indexOf(`--${name}`);
    return i > 0 && process.argv[i + 1] !== undefined ? Number(process.argv[i + 1]) : undefined;
  };
  const given = { connections: arg('connections'), rounds: arg('rounds'), roundS: arg('seconds') };
  const opts = Object.fromEntries(Object.entries(given).filter(([, v]) => v !== undefined && Number.isFinite(v))) as HttpBenchOptions;
  runHttpBench(opts).catch((err: unknown) => {
    console.error(err);
    process.exit(1);
  });
}
