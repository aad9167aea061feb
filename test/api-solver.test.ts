import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { solvePoint } from '../src/solver/point.js';
import { useTestServer } from './support/server.js';

describe('drivetrains and operating points over HTTP', () => {
  const ctx = useTestServer({ maxBatchPoints: 150_000 });

  it('returns the demo drivetrain with derived facts', async () => {
    const r = await request(ctx.srv.url).get('/v1/drivetrains/van-axle').expect(200);
    // k = Zr/Zs and Zp = (Zr − Zs)/2 (planetary geometry; Müller, Epicyclic Drive Trains, 1982, from memory).
    expect(r.body.derived.k).toBeCloseTo(78 / 30, 12);
    expect(r.body.derived.planetTeeth).toBe(24);
    expect(r.body.derived.availableModes).toEqual(['split', 'ring-held', 'locked']);
    // Ring held: ω_s/ω_c = 1 + k (Müller, Epicyclic Drive Trains), times the final drive 7.5.
    expect(r.body.derived.ratios['ring-held']).toBeCloseTo((1 + 78 / 30) * 7.5, 9);
    expect(r.body.hash).toMatch(/^[0-9a-f]{64}$/);
  });

  it('refuses impossible tooth counts and unknown machines with their codes', async () => {
    const base = (await request(ctx.srv.url).get('/v1/drivetrains/van-axle').expect(200)).body.document;
    const odd = await request(ctx.srv.url).put('/v1/drivetrains/odd').send({ ...base, gearset: { ...base.gearset, ringTeeth: 79 } }).expect(422);
    expect(odd.body.error.code).toBe('gearset-invalid');
    expect(odd.body.error.path).toMatch(/^gearset\./);
    const unknown = await request(ctx.srv.url).put('/v1/drivetrains/nom').send({ ...base, sunMachine: 'no-such-machine' }).expect(422);
    expect(unknown.body.error.code).toBe('unknown-machine');
    expect(unknown.body.error.path).toBe('sunMachine');
    const bad = await request(ctx.srv.url).put('/v1/drivetrains/bad').send({ ...base, wheelRadiusM: -1 }).expect(422);
    expect(bad.body.error.code).toBe('drivetrain-invalid');
    expect(bad.body.error.path).toBe('wheelRadiusM');
    await request(ctx.srv.url).get('/v1/drivetrains/odd').expect(404);
  });

  it('answers one point exactly as the in-process solver', async () => {
    const r = await request(ctx.srv.url)
      .post('/v1/drivetrains/van-axle/operating-points')
      .send({ points: [{ wheelSpeedRpm: 400, wheelTorqueNm: 600 }] })
      .expect(200);
    const dt = ctx.srv.app.registry.getDrivetrain('van-axle')!;
    expect(r.body.results).toEqual([JSON.parse(JSON.stringify(solvePoint(dt, 400, 600)))]);
    expect(r.body.results[0].feasible).toBe(true);
  });

  it('answers one point by GET exactly as the batch route and the in-process solver', async () => {
    const dt = ctx.srv.app.registry.getDrivetrain('van-axle')!;
    const cases: Array<[string, number, number, object]> = [
      ['wheelSpeedRpm=400&wheelTorqueNm=600', 400, 600, {}],
      ['wheelSpeedRpm=-120.5&wheelTorqueNm=-300&strict=true', -120.5, -300, { strict: true }],
      ['wheelSpeedRpm=900&wheelTorqueNm=-2400&alternatives=false', 900, -2400, { alternatives: false }],
      ['wheelSpeedRpm=1.2e3&wheelTorqueNm=5000&modes=split,locked', 1200, 5000, { modes: ['split', 'locked'] }],
    ];
    for (const [query, n, t, opts] of cases) {
      const one = await request(ctx.srv.url).get(`/v1/drivetrains/van-axle/operating-point?${query}`).expect(200);
      const batch = await request(ctx.srv.url)
        .post('/v1/drivetrains/van-axle/operating-points')
        .send({ points: [{ wheelSpeedRpm: n, wheelTorqueNm: t }], ...opts })
        .expect(200);
      expect(one.body).toEqual(batch.body.results[0]);
      expect(one.body).toEqual(JSON.parse(JSON.stringify(solvePoint(dt, n, t, opts))));
    }
  });

  it('keeps single-point answers for the drivetrain they were solved on, and starts afresh when it changes', async () => {
    const url = '/v1/drivetrains/cached/operating-point?wheelSpeedRpm=350&wheelTorqueNm=700';
    const doc = (await request(ctx.srv.url).get('/v1/drivetrains/van-axle').expect(200)).body.document;
    await request(ctx.srv.url).put('/v1/drivetrains/cached').send(doc).expect(201);
    const first = await request(ctx.srv.url).get(url).expect(200);
    const again = await request(ctx.srv.url).get(url).expect(200);
    expect(again.text).toBe(first.text);
    // A small batch is put together from the same answers, as JSON.stringify({ results }) would print it.
    const batch = await request(ctx.srv.url)
      .post('/v1/drivetrains/cached/operating-points')
      .send({ points: [{ wheelSpeedRpm: 350, wheelTorqueNm: 700 }, { wheelSpeedRpm: 350, wheelTorqueNm: 700 }] })
      .expect(200);
    expect(batch.headers['content-type']).toMatch(/^application\/json/);
    expect(batch.text).toBe(`{"results":[${first.text},${first.text}]}`);
    await request(ctx.srv.url).put('/v1/drivetrains/cached').send({ ...doc, auxiliaryW: doc.auxiliaryW + 1000 }).expect(200);
    const changed = await request(ctx.srv.url).get(url).expect(200);
    const dt = ctx.srv.app.registry.getDrivetrain('cached')!;
    expect(changed.text).toBe(JSON.stringify(solvePoint(dt, 350, 700)));
    // Auxiliary load is drawn from the battery one for one (common practice).
    expect(changed.body.batteryW - first.body.batteryW).toBeCloseTo(1000, 6);
    const metrics = (await request(ctx.srv.url).get('/metrics').expect(200)).text;
    expect(metrics).toMatch(/^episplit_point_answers_total\{source="kept"\} [1-9]/m);
    expect(metrics).toMatch(/^episplit_point_answers_kept [1-9]/m);
    await request(ctx.srv.url).delete('/v1/drivetrains/cached').expect(204);
  });

  it('refuses a bad single-point query with the field path, never reading an empty value as 0', async () => {
    const bad: Array<[string, string]> = [
      ['wheelSpeedRpm=&wheelTorqueNm=600', 'querystring.wheelSpeedRpm'],
      ['wheelTorqueNm=600', 'querystring.wheelSpeedRpm'],
      ['wheelSpeedRpm=400&wheelTorqueNm=6OO', 'querystring.wheelTorqueNm'],
      ['wheelSpeedRpm=2e6&wheelTorqueNm=1', 'querystring.wheelSpeedRpm'],
      ['wheelSpeedRpm=1&wheelTorqueNm=1&modes=split,warp', 'querystring.modes'],
      ['wheelSpeedRpm=1&wheelTorqueNm=1&strict=yes', 'querystring.strict'],
      ['wheelSpeedRpm=1&wheelSpeedRpm=2&wheelTorqueNm=1', 'querystring.wheelSpeedRpm'],
    ];
    for (const [query, path] of bad) {
      const r = await request(ctx.srv.url).get(`/v1/drivetrains/van-axle/operating-point?${query}`).expect(400);
      expect(r.body.error.code).toBe('invalid-request');
      expect(r.body.error.path).toBe(path);
    }
    const none = await request(ctx.srv.url).get('/v1/drivetrains/nothing/operating-point?wheelSpeedRpm=1&wheelTorqueNm=1').expect(404);
    expect(none.body.error.code).toBe('not-found');
  });

  it('calls a launch beyond the limit motoring in either direction (power to the wheels at standstill)', async () => {
    const r = await request(ctx.srv.url)
      .post('/v1/drivetrains/van-axle/operating-points')
      .send({ points: [{ wheelSpeedRpm: 0, wheelTorqueNm: 5000 }, { wheelSpeedRpm: 0, wheelTorqueNm: -5000 }] })
      .expect(200);
    expect(r.body.results.map((x: { reason: string }) => x.reason)).toEqual(['above-motoring-limit', 'above-motoring-limit']);
  });

  it('leaves the alternatives out when asked, with the same optimum', async () => {
    const points = [{ wheelSpeedRpm: 400, wheelTorqueNm: 600 }, { wheelSpeedRpm: 800, wheelTorqueNm: -500 }];
    const full = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/operating-points').send({ points }).expect(200);
    const lean = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/operating-points').send({ points, alternatives: false }).expect(200);
    for (let i = 0; i < points.length; i++) {
      expect(full.body.results[i].alternatives.length).toBeGreaterThan(0);
      expect(lean.body.results[i]).toEqual({ ...full.body.results[i], alternatives: [] });
    }
    expect(lean.text.length).toBeLessThan(0.6 * full.text.length);
  });

  it('answers 100 000 points in order', async () => {
    const points = Array.from({ length: 100_000 }, (_, i) => ({ wheelSpeedRpm: (i % 1000) * 1.5, wheelTorqueNm: ((i * 7919) % 4000) - 2000 }));
    const r = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/operating-points').send({ points }).expect(200);
    expect(r.body.results).toHaveLength(100_000);
    for (const i of [0, 1, 4242, 99_999]) {
      expect(r.body.results[i].wheelSpeedRpm).toBe(points[i]!.wheelSpeedRpm);
      expect(r.body.results[i].wheelTorqueNm).toBe(points[i]!.wheelTorqueNm);
    }
  });

  it('refuses batches above the configured maximum, and malformed points', async () => {
    const points = Array.from({ length: 150_001 }, () => ({ wheelSpeedRpm: 1, wheelTorqueNm: 1 }));
    const big = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/operating-points').send({ points }).expect(413);
    expect(big.body.error.code).toBe('too-large');
    const bad = await request(ctx.srv.url)
      .post('/v1/drivetrains/van-axle/operating-points')
      .send({ points: [{ wheelSpeedRpm: 'fast', wheelTorqueNm: 1 }] })
      .expect(400);
    expect(bad.body.error.code).toBe('invalid-request');
    expect(bad.body.error.path).toBe('points[0].wheelSpeedRpm');
    const none = await request(ctx.srv.url).post('/v1/drivetrains/nothing/operating-points').send({ points: [{ wheelSpeedRpm: 1, wheelTorqueNm: 1 }] }).expect(404);
    expect(none.body.error.code).toBe('not-found');
    const mode = await request(ctx.srv.url)
      .post('/v1/drivetrains/van-axle/operating-points')
      .send({ points: [{ wheelSpeedRpm: 1, wheelTorqueNm: 1 }], modes: ['warp'] })
      .expect(400);
    expect(mode.body.error.path).toBe('modes[0]');
  });

  it('solves for a drivetrain sent inline', async () => {
    const doc = (await request(ctx.srv.url).get('/v1/drivetrains/van-axle').expect(200)).body.document;
    const r = await request(ctx.srv.url)
      .post('/v1/operating-points')
      .send({ drivetrain: { ...doc, devices: {} }, points: [{ wheelSpeedRpm: 400, wheelTorqueNm: 600 }] })
      .expect(200);
    expect(r.body.results[0].mode).toBe('split');
    const bad = await request(ctx.srv.url)
      .post('/v1/operating-points')
      .send({ drivetrain: { ...doc, gearset: { ...doc.gearset, planets: 40 } }, points: [{ wheelSpeedRpm: 1, wheelTorqueNm: 1 }] })
      .expect(422);
    expect(bad.body.error.path).toBe('drivetrain.gearset.planets');
    const odd = await request(ctx.srv.url)
      .post('/v1/operating-points')
      .send({ drivetrain: { ...doc, gearset: { ...doc.gearset, ringTeeth: 79 } }, points: [{ wheelSpeedRpm: 1, wheelTorqueNm: 1 }] })
      .expect(422);
    expect(odd.body.error.code).toBe('gearset-invalid');
    expect(odd.body.error.path).toMatch(/^drivetrain\.gearset\./);
    const missing = await request(ctx.srv.url)
      .post('/v1/operating-points')
      .send({ drivetrain: { ...doc, ringMachine: 'no-such' }, points: [{ wheelSpeedRpm: 1, wheelTorqueNm: 1 }] })
      .expect(422);
    expect(missing.body.error.path).toBe('drivetrain.ringMachine');
  });

  it('a drivetrain can be stored and survives deleting its machine only after it is gone', async () => {
    const base = (await request(ctx.srv.url).get('/v1/drivetrains/van-axle').expect(200)).body.document;
    const grid = (await request(ctx.srv.url).get('/v1/machines/sun-machine?document=true').expect(200)).body.document;
    await request(ctx.srv.url).put('/v1/machines/my-sun').send(grid).expect(201);
    await request(ctx.srv.url).put('/v1/drivetrains/my-axle').send({ ...base, sunMachine: 'my-sun' }).expect(201);
    const inUse = await request(ctx.srv.url).delete('/v1/machines/my-sun').expect(409);
    expect(inUse.body.error.code).toBe('in-use');
    await request(ctx.srv.url).delete('/v1/drivetrains/my-axle').expect(204);
    await request(ctx.srv.url).delete('/v1/machines/my-sun').expect(204);
  });
});
