import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { parseTableCsv } from '../src/report/tableCsv.js';
import { solvePoint } from '../src/solver/point.js';
import { useTestServer } from './support/server.js';

describe('tables and plots over HTTP', () => {
  const ctx = useTestServer();
  const spec = { speedRpm: { from: 0, to: 1500, steps: 7 }, torqueNm: { from: -2000, to: 2000, steps: 9 } };

  it('CSV cells equal the single-point answers and identical requests hit the cache with an ETag', async () => {
    const r = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/tables').send({ ...spec, format: 'csv' }).expect(200);
    expect(r.headers['content-type']).toMatch(/text\/csv/);
    expect(r.text.split('\n')[0]).toMatch(/^# .*certifies nothing/);
    const etag = r.headers.etag as string;
    expect(etag).toMatch(/^"[0-9a-f]{64}"$/);
    const cells = parseTableCsv(r.text);
    expect(cells).toHaveLength(63);
    const dt = ctx.srv.app.registry.getDrivetrain('van-axle')!;
    for (const c of cells) {
      const p = solvePoint(dt, c.wheelSpeedRpm, c.wheelTorqueNm);
      expect(c.feasible).toBe(p.feasible);
      if (p.feasible) {
        expect(c.mode).toBe(p.mode);
        expect(c.batteryW).toBe(p.batteryW);
      }
    }
    const again = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/tables').send({ ...spec, format: 'csv' }).expect(200);
    expect(again.text).toBe(r.text);
    await request(ctx.srv.url).post('/v1/drivetrains/van-axle/tables').set('if-none-match', etag).send({ ...spec, format: 'csv' }).expect(304);
  });

  it('serves JSON and a C header with the caution and the content hash', async () => {
    const j = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/tables').send(spec).expect(200);
    expect(j.body.kind).toBe('lookup-table');
    expect(j.body.axes.speedRpm).toHaveLength(7);
    const c = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/tables').send({ ...spec, format: 'c' }).expect(200);
    expect(c.text).toMatch(/static const float/);
    expect(c.text).toContain(c.headers['x-content-hash']);
    expect(c.text.replace(/\s*\n\s*\*\s*/g, ' ')).toMatch(/certifies nothing/);
  });

  it('builds a large table on the worker pool while /health keeps answering', async () => {
    const big = { speedRpm: { from: 0, to: 1600, steps: 81 }, torqueNm: { from: -2500, to: 2500, steps: 81 }, format: 'csv' };
    // fetch sends at once (a supertest request would wait for its await).
    let tableDone = false;
    const pending = fetch(`${ctx.srv.url}/v1/drivetrains/van-axle/tables`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify(big),
    }).then(async (res) => {
      tableDone = true;
      return { status: res.status, text: await res.text() };
    });
    await new Promise((resolve) => setTimeout(resolve, 50));
    const health = await request(ctx.srv.url).get('/health').expect(200);
    expect(health.body.status).toBe('ok');
    expect(tableDone).toBe(false); // answered while the table was still being built
    const r = await pending;
    expect(r.status).toBe(200);
    expect(parseTableCsv(r.text)).toHaveLength(81 * 81);
  });

  it('refuses bad table requests with table-invalid and the field', async () => {
    const desc = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/tables').send({ speedRpm: [0, 10, 5], torqueNm: spec.torqueNm }).expect(422);
    expect(desc.body.error.code).toBe('table-invalid');
    expect(desc.body.error.path).toMatch(/^speedRpm/);
    const fmt = await request(ctx.srv.url).post('/v1/drivetrains/van-axle/tables').send({ ...spec, format: 'xlsx' }).expect(422);
    expect(fmt.body.error.path).toBe('format');
  });

  it('plots the table and a machine map as SVG', async () => {
    const t = await fetch(`${ctx.srv.url}/v1/drivetrains/van-axle/plot.svg?speedRpm=0:1500:21&torqueNm=-2000:2000:21`);
    expect(t.status).toBe(200);
    expect(t.headers.get('content-type')).toMatch(/image\/svg\+xml/);
    const svg = await t.text();
    expect(svg).toMatch(/^<\?xml/);
    expect(svg).toContain('id="envelope"');
    expect(svg).toMatch(/data-mode="split"/);
    const m = await fetch(`${ctx.srv.url}/v1/machines/ring-machine/plot.svg`);
    expect(m.status).toBe(200);
    expect(await m.text()).toContain('id="envelope"');
    const bad = await request(ctx.srv.url).get('/v1/drivetrains/van-axle/plot.svg?speedRpm=abc').expect(400);
    expect(bad.body.error.path).toBe('speedRpm');
    const blank = await request(ctx.srv.url).get('/v1/drivetrains/van-axle/plot.svg?speedRpm=,800').expect(400);
    expect([blank.body.error.code, blank.body.error.path]).toEqual(['invalid-request', 'speedRpm']);
  });
});
