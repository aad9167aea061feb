/**
 * Cycle requests are solved on the worker pool: while a long cycle job (about 100 000 steps)
 * runs, the server keeps answering other requests, and the job's answer equals the in-process
 * answer exactly. Order of completion only; no timing.
 */
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { answerCycle, cycleRequestSchema, MAX_CYCLE_WORK_STEPS } from '../src/api/routes/cycles.js';
import { plotCycle } from '../src/report/svg/plotCycle.js';
import { MAX_CYCLE_SAMPLES } from '../src/vehicle/schema.js';
import { useTestServer } from './support/server.js';

// An invented light delivery van for our own demo scenario.
const van = { massKg: 2600, rotatingMassFactor: 0.05, rollingResistance: 0.011, dragAreaM2: 1.9, auxiliaryW: 400 };

/** A long generated cycle: speed waves with stops and a rolling grade (invented). */
function longCycle(samples: number) {
  const timeS = Array.from({ length: samples }, (_, i) => i);
  const speedKph = timeS.map((t) => Math.max(0, 35 + 40 * Math.sin(t / 47) + 5 * Math.sin(t / 7.3)));
  const gradePct = timeS.map((t) => 2 * Math.sin(t / 211));
  return { name: 'long-generated', timeS, speedKph, gradePct };
}

function post(url: string, body: unknown): Promise<Response> {
  return fetch(url, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
}

describe('cycle jobs on worker threads', () => {
  const ctx = useTestServer();

  it('answers /health while a 100 000-step cycle runs, and the job equals the in-process answer', async () => {
    const body = { vehicle: van, cycle: longCycle(MAX_CYCLE_SAMPLES), usableBatteryWh: 80_000 };
    expect(MAX_CYCLE_SAMPLES - 1).toBeLessThanOrEqual(MAX_CYCLE_WORK_STEPS); // one run: within the cap
    const app = ctx.srv.app;
    let jobDone = false;
    const pending = post(`${ctx.srv.url}/v1/drivetrains/van-axle/cycles`, body).then(async (res) => {
      jobDone = true;
      return { status: res.status, type: res.headers.get('content-type'), text: await res.text() };
    });
    // Wait until the server holds the job (or it finished, which fails below).
    while (app.jobs.running === 0 && !jobDone) await new Promise((resolve) => setTimeout(resolve, 5));
    expect(jobDone).toBe(false);
    const health = await request(ctx.srv.url).get('/health').expect(200);
    expect(health.body.status).toBe('ok');
    await request(ctx.srv.url).get('/v1/cycles').expect(200);
    expect(jobDone).toBe(false); // answered while the cycle was still being solved
    expect(app.jobs.running).toBe(1);

    const r = await pending;
    expect(r.status).toBe(200);
    expect(r.type).toBe('application/json; charset=utf-8');
    const dt = app.registry.getDrivetrain('van-axle')!;
    const local = answerCycle(dt, cycleRequestSchema.parse(body));
    expect(local.result.steps).toBe(MAX_CYCLE_SAMPLES - 1);
    expect(local.result.modes.length).toBeGreaterThan(1);
    // The HTTP answer is JSON: compare with the in-process answer as JSON carries it, value by
    // value and character by character.
    expect(JSON.parse(r.text)).toStrictEqual(JSON.parse(JSON.stringify(local)));
    expect(r.text).toBe(JSON.stringify(local));
  });

  it('answers comparison and bounds as in process', async () => {
    const body = { vehicle: van, cycle: { builtin: 'nedc' }, compare: true, switchCostsWh: [0, 0.5], series: true, modes: ['split', 'ring-held', 'locked'] };
    const r = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send(body).expect(200);
    const local = answerCycle(ctx.srv.app.registry.getDrivetrain('van-axle')!, cycleRequestSchema.parse(body));
    expect(r.body).toStrictEqual(JSON.parse(JSON.stringify(local)));
  });

  it('draws the same SVG as a plot of the in-process run', async () => {
    const body = { vehicle: van, cycle: { builtin: 'demo-delivery' } };
    const r = await post(`${ctx.srv.url}/v1/drivetrains/van-axle/cycles/plot.svg`, body);
    expect(r.status).toBe(200);
    const dt = ctx.srv.app.registry.getDrivetrain('van-axle')!;
    const { result } = answerCycle(dt, cycleRequestSchema.parse({ ...body, series: true }));
    expect(await r.text()).toBe(plotCycle(result, { title: `${dt.name}: ${result.cycle}` }));
  });

  it('still refuses bad requests on the calling thread with their codes and paths', async () => {
    const url = `${ctx.srv.url}/v1/drivetrains/van-axle/cycles`;
    const speed = await request(url).post('').send({ vehicle: van, cycle: { timeS: [0, 1, 2], speedKph: [0, -3, 0] } }).expect(422);
    expect([speed.body.error.code, speed.body.error.path]).toEqual(['cycle-invalid', 'cycle.speedKph[1]']);
    const veh = await request(url).post('').send({ vehicle: { ...van, wheelRadiusM: 0 }, cycle: { builtin: 'nedc' } }).expect(422);
    expect([veh.body.error.code, veh.body.error.path]).toEqual(['vehicle-invalid', 'vehicle.wheelRadiusM']);
    // Bounds come from the cycle's own run; a comparison adds the three layouts that run is not.
    const big = await request(url).post('').send({ vehicle: van, cycle: longCycle(50_002), compare: true, switchCostsWh: [0] }).expect(413);
    expect([big.body.error.code, big.body.error.path]).toEqual(['too-large', 'cycle']);
    expect(big.body.error.message).toMatch(/^50001 steps × 4 runs exceed/);
    const restricted = await request(url).post('').send({ vehicle: van, cycle: longCycle(50_002), compare: true, modes: ['split', 'locked'] }).expect(413);
    expect(restricted.body.error.message).toMatch(/^50001 steps × 5 runs exceed/);
    const plot = await request(`${url}/plot.svg`).post('').send({ vehicle: van, cycle: { csv: 'timeS,speedKph\n0,0\n0,1' } }).expect(422);
    expect([plot.body.error.code, plot.body.error.path]).toEqual(['cycle-invalid', 'cycle.timeS[1]']);
  });
});
