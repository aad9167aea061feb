/**
 * The episplit command line, run as a child process (`node --import tsx src/cli/main.ts`) over a
 * temporary copy of the demo maps and an empty data folder. The reference for every answer is
 * the HTTP service answering the same request over the same folders: the command line working
 * on files alone must say exactly what the service says.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { startServer, tempDirs, type TestServer } from './support/server.js';
import type { SweepRow } from '../src/vehicle/sweep.js';
import { parseSweepCsv, sweepRowsToCsv } from '../src/vehicle/sweepCsv.js';

const ROOT = path.resolve(import.meta.dirname, '..');
const MAIN = path.join(ROOT, 'src/cli/main.ts');

interface Run {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Runs the CLI with the given arguments; killed after 40 s so a hang fails the test. */
function cli(args: string[]): Promise<Run> {
  const env = { ...process.env };
  for (const k of ['MAPS_DIR', 'DATA_DIR', 'API_TOKEN', 'PORT', 'HOST']) delete env[k];
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--import', 'tsx', MAIN, ...args], { cwd: ROOT, env, stdio: ['ignore', 'pipe', 'pipe'], timeout: 40_000 });
    let stdout = '';
    let stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (stdout += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    child.on('error', reject);
    child.on('close', (code) => resolve({ code, stdout, stderr }));
  });
}

function errorOf(run: Run): { code: string; message: string; path?: string } {
  const line = run.stderr.trim().split('\n').pop()!;
  return (JSON.parse(line) as { error: { code: string; message: string; path?: string } }).error;
}

let server: TestServer;
let dirs: ReturnType<typeof tempDirs>;
let work: string;
let src: string[];

const SPEED = '0:1500:21';
const TORQUE = '-2000:3000:21';
const SPEC = { speedRpm: { from: 0, to: 1500, steps: 21 }, torqueNm: { from: -2000, to: 3000, steps: 21 } };

/** An invented vehicle for the demo van scenario (not a real vehicle). */
const VEHICLE = { massKg: 2800, rollingResistance: 0.009, dragAreaM2: 2.1, auxiliaryW: 300 };

async function rest(route: string, body?: unknown): Promise<Response> {
  const res = await fetch(server.url + route, body === undefined ? {} : { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
  expect(res.status, `${route}: ${res.status}`).toBe(200);
  return res;
}

beforeAll(async () => {
  dirs = tempDirs();
  server = await startServer(dirs);
  work = mkdtempSync(path.join(tmpdir(), 'episplit-cli-'));
  src = ['--maps', dirs.mapsDir, '--data', dirs.dataDir];
  writeFileSync(path.join(work, 'vehicle.json'), JSON.stringify(VEHICLE));
});

afterAll(async () => {
  await server?.close();
  dirs?.cleanup();
  if (work) rmSync(work, { recursive: true, force: true });
});

describe('episplit table', () => {
  it('writes the same CSV bytes over files (worker threads) as the service answers', async () => {
    const out = path.join(work, 'van.csv');
    const run = await cli(['table', '--drivetrain', 'van-axle', '--speed', SPEED, '--torque', TORQUE, '--format', 'csv', '--threads', '2', '--out', out, ...src]);
    expect(run.stderr).toBe('');
    expect(run.code).toBe(0);
    expect(run.stdout).toBe('');
    const served = await (await rest('/v1/drivetrains/van-axle/tables', { ...SPEC, format: 'csv' })).text();
    expect(readFileSync(out, 'utf8')).toBe(served);
    // 21 × 21 cells and a header line.
    expect(served.trimEnd().split('\n').filter((l) => !l.startsWith('#'))).toHaveLength(21 * 21 + 1);
  });

  it('prints the same CSV to standard output through a running server (--url)', async () => {
    const run = await cli(['table', '--drivetrain', 'van-axle', '--speed', SPEED, '--torque', TORQUE, '--format', 'csv', '--url', server.url]);
    expect([run.code, run.stderr]).toEqual([0, '']);
    const served = await (await rest('/v1/drivetrains/van-axle/tables', { ...SPEC, format: 'csv' })).text();
    expect(run.stdout).toBe(served);
  });

  it('writes JSON and C header files carrying the content hash the service computes', async () => {
    const json = path.join(work, 'van.json');
    const header = path.join(work, 'van.h');
    const [a, b] = await Promise.all([
      cli(['table', '--drivetrain', 'van-axle', '--speed', SPEED, '--torque', TORQUE, '--out', json, ...src]),
      cli(['table', '--drivetrain', 'van-axle', '--speed', SPEED, '--torque', TORQUE, '--format', 'c', '--out', header, ...src]),
    ]);
    expect(a.code).toBe(0);
    expect(b.code).toBe(0);
    const servedJson = await rest('/v1/drivetrains/van-axle/tables', { ...SPEC, format: 'json' });
    const servedC = await rest('/v1/drivetrains/van-axle/tables', { ...SPEC, format: 'c' });
    const table = JSON.parse(readFileSync(json, 'utf8')) as { kind: string; hash: string; axes: { speedRpm: number[]; torqueNm: number[] }; cells: unknown };
    expect(table.kind).toBe('lookup-table');
    expect(table.hash).toBe(servedJson.headers.get('x-content-hash'));
    expect(table.axes.speedRpm).toHaveLength(21);
    // Everything but the generation time equals the service's answer.
    const served = (await servedJson.json()) as Record<string, unknown>;
    expect({ ...table, generatedAt: null }).toEqual({ ...served, generatedAt: null });
    const h = readFileSync(header, 'utf8');
    expect(h).toContain(servedC.headers.get('x-content-hash')!);
    expect(h).toMatch(/#define VAN_AXLE_N_SPEED 21\b/);
    expect(h).toMatch(/#define VAN_AXLE_N_TORQUE 21\b/);
  });
});

describe('episplit point', () => {
  it('prints a feasible optimum equal to the service answer', async () => {
    const run = await cli(['point', '--drivetrain', 'van-axle', '--speed', '400', '--torque', '600', ...src]);
    expect(run.code).toBe(0);
    const got = JSON.parse(run.stdout) as { feasible: boolean; mode: string; batteryW: number };
    expect(got.feasible).toBe(true);
    // First law (common practice): motoring, the battery supplies at least the wheel power T·ω.
    const wheelW = 600 * ((400 * 2 * Math.PI) / 60);
    expect(got.batteryW).toBeGreaterThan(wheelW);
    const served = (await (await rest('/v1/drivetrains/van-axle/operating-points', { points: [{ wheelSpeedRpm: 400, wheelTorqueNm: 600 }] })).json()) as { results: unknown[] };
    expect(got).toEqual(served.results[0]);
  });
});

describe('episplit bad arguments', () => {
  it('exits with the documented code and error code, and creates no output file', async () => {
    const out = (name: string) => path.join(work, `fail-${name}`);
    const base = ['--drivetrain', 'van-axle', '--speed', SPEED, '--torque', TORQUE];
    const [axis, unknown, format, shard, tooMany] = await Promise.all([
      cli(['table', '--drivetrain', 'van-axle', '--speed', '0:1500', '--torque', TORQUE, '--out', out('axis.csv'), ...src]),
      cli(['table', '--drivetrain', 'no-such-axle', '--speed', SPEED, '--torque', TORQUE, '--out', out('unknown.csv'), ...src]),
      cli(['table', ...base, '--format', 'xml', '--out', out('format.csv'), ...src]),
      cli(['sweep', '--spec', path.join(work, 'whatever.json'), '--shard', '2/2', '--out', out('shard.csv'), ...src]),
      // Passes argument parsing, then the model refuses the request (axis longer than allowed).
      cli(['table', '--drivetrain', 'van-axle', '--speed', '0:1500:2000', '--torque', TORQUE, '--out', out('large.csv'), ...src]),
    ]);
    // Exit codes from src/cli/exitCodes.ts: 2 usage, 3 not found, 4 refused by the model.
    expect([axis.code, errorOf(axis).code, errorOf(axis).path]).toEqual([2, 'invalid-request', '--speed']);
    expect([unknown.code, errorOf(unknown).code]).toEqual([3, 'not-found']);
    expect([format.code, errorOf(format).code]).toEqual([2, 'invalid-request']);
    expect([shard.code, errorOf(shard).code, errorOf(shard).path]).toEqual([2, 'invalid-request', '--shard']);
    expect([tooMany.code, errorOf(tooMany).code]).toEqual([4, 'table-invalid']);
    for (const r of [axis, unknown, format, shard, tooMany]) expect(r.stdout).toBe('');
    for (const name of ['axis.csv', 'unknown.csv', 'format.csv', 'shard.csv', 'large.csv']) expect(existsSync(out(name))).toBe(false);
  });
});

describe('episplit sweep and merge', () => {
  it('merging shards 0/2 and 1/2 gives the unsharded CSV byte for byte', async () => {
    const drivetrain = JSON.parse(readFileSync(path.join(dirs.mapsDir, 'van-axle.json'), 'utf8')) as Record<string, unknown>;
    const spec = {
      drivetrain,
      vehicle: VEHICLE,
      // A short invented trace: 0 → 50 km/h → 0 with a 4 % climb, 60 s.
      cycles: [{ cycle: { name: 'short', timeS: [0, 10, 20, 30, 40, 50, 60], speedKph: [0, 30, 50, 50, 40, 15, 0], gradePct: [0, 0, 4, 4, 0, 0, 0] } }],
      sunTeeth: [24, 30],
      finalDriveRatio: [6.5, 7.5, 8.5],
      constraints: { minLaunchWheelTorqueNm: 2500 },
    };
    const specFile = path.join(work, 'sweep.json');
    writeFileSync(specFile, JSON.stringify(spec));
    const f = (n: string) => path.join(work, n);
    const runs = await Promise.all([
      cli(['sweep', '--spec', specFile, '--out', f('all.csv'), ...src]),
      cli(['sweep', '--spec', specFile, '--shard', '0/2', '--out', f('s0.csv'), ...src]),
      cli(['sweep', '--spec', specFile, '--shard', '1/2', '--out', f('s1.csv'), ...src]),
      cli(['sweep', '--spec', specFile, '--threads', '2', '--out', f('pooled.csv'), ...src]),
    ]);
    for (const r of runs) expect([r.code, r.stderr]).toEqual([0, '']);
    const merged = await cli(['merge', '--out', f('merged.csv'), f('s1.csv'), f('s0.csv')]);
    expect([merged.code, merged.stderr]).toEqual([0, '']);
    const all = readFileSync(f('all.csv'), 'utf8');
    expect(readFileSync(f('merged.csv'), 'utf8')).toBe(all);
    expect(readFileSync(f('pooled.csv'), 'utf8')).toBe(all);
    // Six designs, each shard holds three; ranks differ per shard but not after merging.
    expect(all.trimEnd().split('\n')).toHaveLength(7);
    expect(readFileSync(f('s0.csv'), 'utf8').trimEnd().split('\n')).toHaveLength(4);
    // A missing shard is refused rather than merged into a partial result.
    const partial = await cli(['merge', '--out', f('partial.csv'), f('s1.csv')]);
    expect([partial.code, errorOf(partial).code]).toEqual([4, 'sweep-invalid']);
    expect(existsSync(f('partial.csv'))).toBe(false);
  });
});

describe('sweep CSV read back for merging', () => {
  it('reads quoted fields (RFC 4180), nulls and rows without cycle figures back to the same text', () => {
    const base: SweepRow = {
      index: 0, id: 'zs30-zr78-n3-fd7.5-ts1-tr1', sunTeeth: 30, ringTeeth: 78, planetTeeth: 24, planets: 3, k: 2.6, finalDriveRatio: 7.5,
      sunTorqueScale: 1, ringTorqueScale: 1, launchWheelTorqueNm: 2323.053, topSpeedKph: 148.375,
      cycles: [{ cycle: 'town, "hilly"', batteryWh: 12.5, whPerKm: 0.1 + 0.2, unfollowedSteps: 0 }, { cycle: 'ring', batteryWh: 0, whPerKm: null, unfollowedSteps: 3 }],
      weightedWhPerKm: null, unfollowedSteps: 3, meetsConstraints: false, violations: ['launch 2323.1 < 2500 N·m', '3 unfollowed steps > 0'], rank: null,
    };
    const broken: SweepRow = { ...base, index: 1, cycles: [], violations: ['design could not be built'], error: 'planet "tips" touch, at N = 3', launchWheelTorqueNm: 0, topSpeedKph: 0 };
    const ranked: SweepRow = { ...base, index: 2, weightedWhPerKm: 1 / 3, meetsConstraints: true, violations: [], rank: 1, unfollowedSteps: 0 };
    const csv = sweepRowsToCsv([base, broken, ranked]);
    const back = parseSweepCsv(csv);
    expect(sweepRowsToCsv(back)).toBe(csv);
    expect(back[0]!.cycles.map((c) => [c.cycle, c.whPerKm])).toEqual([['town, "hilly"', 0.1 + 0.2], ['ring', null]]);
    expect(back[1]!.cycles).toEqual([]);
    expect(back[1]!.error).toBe(broken.error);
    expect([back[2]!.rank, back[2]!.weightedWhPerKm, back[2]!.violations]).toEqual([1, 1 / 3, []]);
  });
});

describe('episplit --url and the other commands', () => {
  it('machines and plots over files equal those through a running server', async () => {
    const [mLocal, mRemote, pLocal, pRemote, mapLocal] = await Promise.all([
      cli(['machines', '--json', ...src]),
      cli(['machines', '--json', '--url', server.url]),
      cli(['plot', '--drivetrain', 'van-axle', '--speed', SPEED, '--torque', TORQUE, ...src]),
      cli(['plot', '--drivetrain', 'van-axle', '--speed', SPEED, '--torque', TORQUE, '--url', server.url]),
      cli(['plot', '--machine', 'sun-machine', ...src]),
    ]);
    for (const r of [mLocal, mRemote, pLocal, pRemote, mapLocal]) expect([r.code, r.stderr]).toEqual([0, '']);
    expect(mRemote.stdout).toBe(mLocal.stdout);
    const listed = (JSON.parse(mLocal.stdout) as { machines: Array<{ name: string; maxTorqueNm: number }> }).machines;
    const served = (await (await rest('/v1/machines')).json()) as { machines: Array<{ name: string; maxTorqueNm: number }> };
    expect(listed.map((m) => [m.name, m.maxTorqueNm])).toEqual(served.machines.map((m) => [m.name, m.maxTorqueNm]));
    expect(pLocal.stdout).toBe(pRemote.stdout);
    expect(pLocal.stdout).toContain('<svg');
    expect(mapLocal.stdout).toBe(await (await rest('/v1/machines/sun-machine/plot.svg')).text());
    expect(mapLocal.stdout).toContain('id="envelope"');
  });

  it('cycle over files equals the service answer; a summary and a plot come through --url', async () => {
    const vehicle = path.join(work, 'vehicle.json');
    const args = ['cycle', '--drivetrain', 'van-axle', '--vehicle', vehicle, '--cycle', 'demo-delivery'];
    const svg = path.join(work, 'cycle.svg');
    const [local, summary] = await Promise.all([
      cli([...args, '--compare', '--switch-cost', '0,5', ...src]),
      cli([...args, '--format', 'summary', '--svg', svg, '--url', server.url]),
    ]);
    for (const r of [local, summary]) expect([r.code, r.stderr]).toEqual([0, '']);
    const served = await (
      await rest('/v1/drivetrains/van-axle/cycles', { vehicle: VEHICLE, cycle: { builtin: 'demo-delivery' }, compare: true, switchCostsWh: [0, 5] })
    ).json();
    expect(JSON.parse(local.stdout)).toEqual(served);
    const answer = served as { result: { whPerKm: number }; bounds: Array<{ boundWh: number; stepwiseWh: number }> };
    // With no switch cost the bound equals the step-by-step optimum (DP over independent steps, common practice).
    expect(answer.bounds[0]!.boundWh).toBeCloseTo(answer.bounds[0]!.stepwiseWh, 6);
    expect(summary.stdout).toContain(answer.result.whPerKm.toFixed(1));
    expect(summary.stdout).toContain('Wh/km');
    expect(readFileSync(svg, 'utf8')).toContain('<svg');
  });
});
