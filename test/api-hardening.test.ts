import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { createJobLimiter } from '../src/api/plugins/jobs.js';
import { BodyCache } from '../src/api/routes/common.js';
import { useTestServer } from './support/server.js';

describe('bearer-token auth', () => {
  const ctx = useTestServer({ apiToken: 's3cret-token' });

  it('guards every /v1 route and leaves /health open', async () => {
    await request(ctx.srv.url).get('/health').expect(200);
    const none = await request(ctx.srv.url).get('/v1/machines').expect(401);
    expect(none.body.error.code).toBe('unauthorized');
    expect(none.headers['www-authenticate']).toBe('Bearer');
    const wrong = await request(ctx.srv.url).get('/v1/machines').set('authorization', 'Bearer nope').expect(401);
    expect(wrong.body.error.code).toBe('unauthorized');
    await request(ctx.srv.url).get('/v1/machines').set('authorization', 'Bearer s3cret-token').expect(200);
    await request(ctx.srv.url).put('/v1/machines/x').send({}).expect(401);
    // Percent-encoded paths reach the same routes and need the token too.
    await request(ctx.srv.url).get('/%761/machines').expect(401);
    await request(ctx.srv.url).get('/v%31/drivetrains').expect(401);
    await request(ctx.srv.url).put('/%761/machines/evil').send({}).expect(401);
  });
});

describe('metrics and limits', () => {
  const ctx = useTestServer();

  it('exposes Prometheus metrics with request counts by route and solver points', async () => {
    await request(ctx.srv.url).get('/v1/machines').expect(200);
    await request(ctx.srv.url)
      .post('/v1/drivetrains/van-axle/operating-points')
      .send({ points: [{ wheelSpeedRpm: 100, wheelTorqueNm: 100 }, { wheelSpeedRpm: 200, wheelTorqueNm: 100 }] })
      .expect(200);
    const m = await request(ctx.srv.url).get('/metrics').expect(200);
    expect(m.text).toMatch(/episplit_http_requests_total\{route="\/v1\/machines",method="GET",status="200"\} 1/);
    expect(m.text).toMatch(/episplit_solver_points_total 2/);
    expect(m.text).toMatch(/episplit_http_request_duration_seconds_bucket/);
  });

  it('the job limiter answers too-many-jobs beyond its cap and frees slots', async () => {
    const lim = createJobLimiter(1);
    let release!: () => void;
    const first = lim.run('table', () => new Promise<void>((r) => (release = r)));
    await expect(lim.run('table', () => 1)).rejects.toMatchObject({ code: 'too-many-jobs', statusCode: 429 });
    release();
    await first;
    await expect(lim.run('table', () => 2)).resolves.toBe(2);
  });

  it('unknown routes get the catalogue body', async () => {
    const r = await request(ctx.srv.url).get('/v2/nothing').expect(404);
    expect(r.body.error.code).toBe('not-found');
  });

  it('serves the OpenAPI document and the docs page', async () => {
    const r = await request(ctx.srv.url).get('/openapi.json').expect(200);
    expect(r.body.openapi).toBe('3.1.0');
    expect(Object.keys(r.body.paths)).toContain('/v1/drivetrains/{name}/operating-points');
    await request(ctx.srv.url).get('/docs/').expect(200);
  });
});

describe('load shedding', () => {
  const ctx = useTestServer({ maxEventLoopDelayMs: 20 });

  it('answers 503 overloaded with Retry-After while the event loop lags, then recovers', async () => {
    await request(ctx.srv.url).get('/v1/machines').expect(200);
    // Make this process's event loop (the server runs in it) lag for over two sampling intervals:
    // 50 ms busy bursts with a turn of the loop between them.
    const end = Date.now() + 2300;
    while (Date.now() < end) {
      const burst = Date.now() + 50;
      while (Date.now() < burst) {
        // busy
      }
      await new Promise((resolve) => setImmediate(resolve));
    }
    const r = await request(ctx.srv.url).get('/v1/machines');
    expect(r.status).toBe(503);
    expect(r.body.error.code).toBe('overloaded');
    expect(r.headers['retry-after']).toBe('5');
    await new Promise((resolve) => setTimeout(resolve, 2500));
    await request(ctx.srv.url).get('/v1/machines').expect(200);
  });
});

describe('response cache', () => {
  it('is bounded by total size and keeps no body above a quarter of the bound', () => {
    const cache = new BodyCache(100);
    cache.set('a', { body: 'x'.repeat(20), contentType: 't' });
    cache.set('b', { body: 'x'.repeat(20), contentType: 't' });
    cache.set('big', { body: 'x'.repeat(26), contentType: 't' });
    expect(cache.get('big')).toBeUndefined();
    cache.get('a'); // a is now the most recent
    for (const k of ['c', 'd', 'e']) cache.set(k, { body: 'x'.repeat(20), contentType: 't' });
    // 5 × 20 = 100 fits; one more evicts the least recent (b).
    cache.set('f', { body: 'x'.repeat(20), contentType: 't' });
    expect(cache.get('b')).toBeUndefined();
    expect(cache.get('a')?.body).toHaveLength(20);
    expect(cache.get('f')?.body).toHaveLength(20);
  });
});
