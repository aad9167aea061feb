/**
 * Machine documents built on the worker pool: while a heavy points fit is being built the server
 * keeps answering other requests (order of completion only; no timing), the stored map equals
 * the in-process build, and a document that fails inside the build gets the code, message and
 * field path the in-process build raises, changing nothing that was stored.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import request from 'supertest';
import { afterEach, beforeEach, describe, expect, it, vi, type MockInstance } from 'vitest';
import { ERROR_CATALOGUE } from '../src/api/errors.js';
import { buildsOnPool, POOLED_GRID_CELLS } from '../src/api/machineRunner.js';
import { loadMachine, parseMachineDoc } from '../src/machine/load.js';
import { ModelError } from '../src/problem.js';
import { TablePool } from '../src/solver/tablePool.js';
import { contentHash } from '../src/store/hash.js';
import { SMALL_GRID } from './support/documents.js';
import { REPO_MAPS, useTestServer } from './support/server.js';

/** Invented loss surface, W: 60 + 0.01·n + 0.04·T² + 2e-6·n² (n rpm, T N·m). */
const lossOf = (rpm: number, t: number) => 60 + 0.01 * rpm + 0.04 * t * t + 2e-6 * rpm * rpm;
/** Invented envelope: 200 N·m up to 4000 rpm, then constant power up to 12 000 rpm. */
const maxTorqueOf = (rpm: number) => (rpm <= 4000 ? 200 : (200 * 4000) / rpm);

/** A points map of `n` invented measurements spread over the envelope (a low-discrepancy sequence). */
function pointsMap(n: number, degree: number, gridSteps: number, envelopeSpeeds = [0, 12000]) {
  const points = Array.from({ length: n }, (_, k) => {
    const rpm = Math.round(12000 * ((k * 0.618034) % 1) * 1000) / 1000;
    const tMax = maxTorqueOf(rpm);
    const t = Math.round((-tMax + 2 * tMax * ((k * 0.7548777) % 1)) * 1000) / 1000;
    const shaftW = (t * rpm * Math.PI) / 30;
    return { speedRpm: rpm, torqueNm: t, electricalW: Math.round((shaftW + lossOf(rpm, t)) * 1000) / 1000 };
  });
  return {
    kind: 'points',
    description: 'invented measurements for the worker tests',
    points,
    envelope: { speedRpm: envelopeSpeeds, maxTorqueNm: envelopeSpeeds.map(maxTorqueOf), minTorqueNm: envelopeSpeeds.map((s) => -maxTorqueOf(s)) },
    maxSpeedRpm: 12000,
    fit: { speedDegree: degree, torqueDegree: degree },
    grid: { speedSteps: gridSteps, torqueSteps: gridSteps },
  };
}

/** A loss grid of `n` × `n` nodes over the invented surface and envelope. */
function lossGrid(n: number) {
  const speedRpm = Array.from({ length: n }, (_, i) => (12000 * i) / (n - 1));
  const torqueNm = Array.from({ length: n }, (_, j) => -200 + (400 * j) / (n - 1));
  const maxTorqueNm = speedRpm.map(maxTorqueOf);
  return {
    kind: 'grid',
    description: 'invented grid for the worker tests',
    speedRpm,
    torqueNm,
    lossW: speedRpm.map((s) => torqueNm.map((t) => lossOf(s, t))),
    maxTorqueNm,
    minTorqueNm: maxTorqueNm.map((t) => -t),
    maxSpeedRpm: 12000,
  };
}

const ringDoc = JSON.parse(readFileSync(path.join(REPO_MAPS, 'ring-machine.json'), 'utf8')) as Record<string, unknown>;

describe('machine documents built on worker threads', () => {
  const ctx = useTestServer();
  let runScript: MockInstance<TablePool['runScript']>;
  /** Machine builds handed to the pool so far in this test. */
  const machineTasks = () => runScript.mock.calls.filter(([script]) => script.filename.includes('machineWorker')).length;

  beforeEach(() => {
    runScript = vi.spyOn(TablePool.prototype, 'runScript');
  });
  afterEach(() => {
    runScript.mockRestore();
  });

  /** The stored entry, its GET answer and its file equal what the in-process build gives. */
  async function expectSameAsInProcess(name: string, raw: unknown): Promise<void> {
    const doc = parseMachineDoc(raw);
    const local = loadMachine(name, doc);
    const entry = ctx.srv.app.registry.getMachine(name)!;
    expect(entry.origin).toBe('data');
    expect(entry.map).toStrictEqual(local.map);
    expect(entry.map.lossW).toStrictEqual(local.map.lossW);
    expect(Object.isFrozen(entry.map)).toBe(true);
    expect(entry.summary).toStrictEqual(local.summary);
    expect(entry.hash).toBe(contentHash(doc));
    expect(entry.doc).toStrictEqual(doc);
    const got = await request(ctx.srv.url).get(`/v1/machines/${name}`).expect(200);
    expect(got.body).toStrictEqual(
      JSON.parse(JSON.stringify({ name, kind: doc.kind, origin: 'data', hash: contentHash(doc), description: doc.description, summary: local.summary })),
    );
    const file = readFileSync(path.join(ctx.dirs.dataDir, 'machines', `${name}.json`), 'utf8');
    expect(file).toBe(JSON.stringify(doc, null, 1) + '\n');
  }

  it('answers /health while a heavy points fit is built, and stores what the in-process build gives', async () => {
    // 10 000 points and 49 terms: well over half a second of fitting in process.
    const body = pointsMap(10_000, 6, 150);
    let putDone = false;
    const pending = fetch(`${ctx.srv.url}/v1/machines/heavy-fit`, {
      method: 'PUT',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify(body),
    }).then(async (res) => {
      putDone = true;
      return { status: res.status, body: (await res.json()) as unknown };
    });
    // Wait until the build has been handed to the pool (or the PUT finished, which fails below).
    while (machineTasks() === 0 && !putDone) await new Promise((resolve) => setTimeout(resolve, 5));
    expect(putDone).toBe(false);
    const health = await request(ctx.srv.url).get('/health').expect(200);
    expect(health.body.status).toBe('ok');
    await request(ctx.srv.url).get('/v1/machines/sun-machine').expect(200);
    expect(putDone).toBe(false); // answered while the fit was still being built

    const r = await pending;
    expect(r.status).toBe(201);
    expect(machineTasks()).toBe(1);
    await expectSameAsInProcess('heavy-fit', body);
  });

  it('builds dq models and large grids on the pool, small grids in process, each as in process', async () => {
    const dq = { ...ringDoc, description: 'invented dq model on a fine grid', grid: { speedSteps: 200, torqueSteps: 200 } };
    await request(ctx.srv.url).put('/v1/machines/fine-dq').send(dq).expect(201);
    expect(machineTasks()).toBe(1);
    await expectSameAsInProcess('fine-dq', dq);

    const big = lossGrid(200);
    expect(big.speedRpm.length * big.torqueNm.length).toBe(POOLED_GRID_CELLS);
    await request(ctx.srv.url).put('/v1/machines/big-grid').send(big).expect(201);
    expect(machineTasks()).toBe(2);
    await expectSameAsInProcess('big-grid', big);

    await request(ctx.srv.url).put('/v1/machines/small-grid').send(SMALL_GRID).expect(201);
    expect(machineTasks()).toBe(2); // 3 × 3 cells: built in process
    await expectSameAsInProcess('small-grid', SMALL_GRID);

    expect(buildsOnPool(parseMachineDoc(lossGrid(199)))).toBe(false);
    expect(buildsOnPool(parseMachineDoc(pointsMap(20, 1, 3)))).toBe(true);
  });

  it('an upload built on the pool shadows the shipped map and is used by the drivetrain, as in process', async () => {
    const app = ctx.srv.app;
    const shipped = app.registry.getMachine('ring-machine')!;
    expect(shipped.origin).toBe('maps');
    expect(app.registry.getDrivetrain('van-axle')!.ring).toBe(shipped.map);

    const stronger = { ...ringDoc, description: 'invented: the demo ring machine on a 400 V bus', dcVoltageV: 400 };
    await request(ctx.srv.url).put('/v1/machines/ring-machine').send(stronger).expect(200);
    expect(machineTasks()).toBe(1);
    await expectSameAsInProcess('ring-machine', stronger);
    const entry = app.registry.getMachine('ring-machine')!;
    expect(entry.shadowed).toBe(shipped);
    expect(app.registry.getDrivetrain('van-axle')!.ring).toBe(entry.map);

    await request(ctx.srv.url).delete('/v1/machines/ring-machine').expect(204);
    expect(app.registry.getMachine('ring-machine')).toBe(shipped);
    expect(app.registry.getDrivetrain('van-axle')!.ring).toBe(shipped.map);
  });

  it('a document that fails inside the build gets the in-process code, message and path, and changes nothing', async () => {
    const url = ctx.srv.url;
    const keep = pointsMap(400, 3, 41);
    await request(url).put('/v1/machines/keep-fit').send(keep).expect(201);
    const stored = await request(url).get('/v1/machines/keep-fit?document=true').expect(200);
    const file = path.join(ctx.dirs.dataDir, 'machines', 'keep-fit.json');
    const storedText = readFileSync(file, 'utf8');

    const negative = pointsMap(400, 3, 41);
    negative.points[3] = { ...negative.points[3]!, electricalW: negative.points[3]!.electricalW - 5000 };
    const oneSpeed = pointsMap(60, 3, 41);
    oneSpeed.points = oneSpeed.points.map((p) => ({ ...p, speedRpm: 3000, electricalW: (p.torqueNm * 3000 * Math.PI) / 30 + lossOf(3000, p.torqueNm) }));
    const cases: Array<{ doc: unknown; code: string; path: string }> = [
      // 16 terms from 5 points
      { doc: pointsMap(5, 3, 41), code: 'fit-failed', path: 'points' },
      // one speed cannot determine a cubic in speed
      { doc: oneSpeed, code: 'fit-failed', path: 'points' },
      // a loss of about −5 kW
      { doc: negative, code: 'map-invalid', path: 'points[3].electricalW' },
      // 400 even speeds plus an envelope corner off them: 401 grid speeds, refused before the fit
      { doc: pointsMap(200, 3, 400, [0, 5000, 12000]), code: 'map-invalid', path: 'envelope.speedRpm' },
      // the back-EMF at 40 000 rpm exceeds V_dc/√3 even at no load
      { doc: { ...ringDoc, maxSpeedRpm: 40_000 }, code: 'map-invalid', path: 'dcVoltageV' },
      // Lq < Ld is outside the model
      { doc: { ...ringDoc, ldH: 0.0006 }, code: 'map-invalid', path: 'lqH' },
      // Rs·I_max reaches the voltage limit at standstill
      { doc: { ...ringDoc, statorResistanceOhm: 1 }, code: 'map-invalid', path: 'statorResistanceOhm' },
    ];
    for (const [k, c] of cases.entries()) {
      const doc = parseMachineDoc(c.doc); // passes the schema: the failure is the build's
      let expected: ModelError | undefined;
      try {
        loadMachine('keep-fit', doc);
      } catch (err) {
        if (err instanceof ModelError) expected = err;
        else throw err;
      }
      expect(expected, `case ${k}`).toBeDefined();
      expect([expected!.code, expected!.path], `case ${k}`).toEqual([c.code, c.path]);

      const r = await request(url).put('/v1/machines/keep-fit').send(c.doc as object);
      expect(r.status, `case ${k}`).toBe(ERROR_CATALOGUE[expected!.code].status);
      expect(r.status, `case ${k}`).toBe(422);
      expect(r.body, `case ${k}`).toStrictEqual({ error: { code: expected!.code, message: expected!.message, path: expected!.path } });
      expect(machineTasks(), `case ${k}`).toBe(k + 2); // built (and failed) on the pool

      const now = await request(url).get('/v1/machines/keep-fit?document=true').expect(200);
      expect(now.body).toStrictEqual(stored.body);
      expect(readFileSync(file, 'utf8')).toBe(storedText);
    }
  });
});
