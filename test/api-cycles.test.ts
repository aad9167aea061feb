import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { useTestServer } from './support/server.js';

// An invented light delivery van for our own demo scenario.
const van = { massKg: 2600, rotatingMassFactor: 0.05, rollingResistance: 0.011, dragAreaM2: 1.9, auxiliaryW: 400 };

describe('drive cycles over HTTP', () => {
  const ctx = useTestServer();

  it('lists the built-in cycles', async () => {
    const r = await request(ctx.srv.url).get('/v1/cycles').expect(200);
    const nedc = r.body.cycles.find((c: { id: string }) => c.id === 'nedc');
    // NEDC: 1180 s, 120 km/h top speed (UNECE Regulation No. 83, Annex 4).
    expect(nedc.durationS).toBe(1180);
    expect(nedc.maxSpeedKph).toBe(120);
  });

  it('runs the NEDC on the demo van with comparison and bound; energy balance closes', async () => {
    const r = await request(ctx.srv.url)
      .post('/v1/drivetrains/van-axle/cycles')
      .send({ vehicle: van, cycle: { builtin: 'nedc' }, compare: true, switchCostsWh: [0, 0.5], usableBatteryWh: 60_000 })
      .expect(200);
    const res = r.body.result;
    expect(res.durationS).toBe(1180);
    // Plausible band for a light delivery van on the NEDC, 100–400 Wh/km (common practice).
    expect(res.whPerKm).toBeGreaterThan(100);
    expect(res.whPerKm).toBeLessThan(400);
    const l = res.losses;
    // Battery energy = net wheel work + friction-braked + all losses (conservation of energy).
    const accounted = res.wheelWorkWh + res.frictionBrakedWh + l.sunMachineWh + l.ringMachineWh + l.meshWh + l.finalDriveWh + l.devicesWh + l.auxiliaryWh;
    expect(Math.abs(accounted - res.batteryWh)).toBeLessThan(1e-6 * Math.abs(res.batteryWh) + 1e-9);
    expect(res.rangeKm).toBeGreaterThan(0);
    expect(r.body.comparison.rows.map((x: { layout: string }) => x.layout)).toContain('full');
    const [b0, b1] = r.body.bounds;
    expect(b0.gapWh).toBeCloseTo(0, 6);
    expect(b1.boundWh).toBeLessThanOrEqual(b1.stepwiseWh + 1e-9);
  });

  it('accepts a cycle as CSV and as JSON with the same result', async () => {
    const timeS = [0, 10, 20, 30, 40];
    const speedKph = [0, 30, 50, 20, 0];
    const json = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send({ vehicle: van, cycle: { timeS, speedKph } }).expect(200);
    const csv = ['timeS,speedKph', ...timeS.map((t, i) => `${t},${speedKph[i]}`)].join('\n');
    const fromCsv = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send({ vehicle: van, cycle: { csv } }).expect(200);
    expect(fromCsv.body.result.batteryWh).toBe(json.body.result.batteryWh);
  });

  it('refuses bad vehicles and cycles with their codes and paths', async () => {
    const v = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send({ vehicle: { ...van, massKg: -1 }, cycle: { builtin: 'nedc' } }).expect(422);
    expect(v.body.error.code).toBe('vehicle-invalid');
    expect(v.body.error.path).toBe('vehicle.massKg');
    const c = await request(ctx.srv.url)
      .post('/v1/drivetrains/van-axle/cycles')
      .send({ vehicle: van, cycle: { timeS: [0, 10, 5], speedKph: [0, 10, 20] } })
      .expect(422);
    expect(c.body.error.code).toBe('cycle-invalid');
    expect(c.body.error.path).toBe('cycle.timeS[2]');
    const b = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send({ vehicle: van, cycle: { builtin: 'nope' } }).expect(422);
    expect(b.body.error.code).toBe('cycle-invalid');
  });

  it('draws a cycle run as SVG', async () => {
    const r = await fetch(`${ctx.srv.url}/v1/drivetrains/van-axle/cycles/plot.svg`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ vehicle: van, cycle: { builtin: 'demo-delivery' } }),
    });
    expect(r.status).toBe(200);
    const svg = await r.text();
    expect(svg).toMatch(/class="mode-band"/);
    expect(svg).toContain('Battery power (kW)');
  });

  it('refuses malformed cycle names, absurd times and oversized jobs with their codes', async () => {
    const name = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send({ vehicle: van, cycle: { csv: 'timeS,speedKph\n0,0\n1,1', name: { a: 1 } } }).expect(422);
    expect([name.body.error.code, name.body.error.path]).toEqual(['cycle-invalid', 'cycle.name']);
    const long = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send({ vehicle: van, cycle: { name: 'x'.repeat(300), timeS: [0, 1], speedKph: [0, 1] } }).expect(422);
    expect(long.body.error.code).toBe('cycle-invalid');
    const huge = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send({ vehicle: van, cycle: { timeS: [-1e308, 1e308], speedKph: [0, 0] } }).expect(422);
    expect([huge.body.error.code, huge.body.error.path]).toEqual(['cycle-invalid', 'cycle.timeS[0]']);
    const n = 30_001;
    const timeS = Array.from({ length: n }, (_, i) => i);
    const speedKph = timeS.map((t) => 40 + 20 * Math.sin(t / 30));
    const big = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/cycles').send({ vehicle: van, cycle: { timeS, speedKph }, compare: true }).expect(413);
    expect([big.body.error.code, big.body.error.path]).toEqual(['too-large', 'cycle']);
  });
});
