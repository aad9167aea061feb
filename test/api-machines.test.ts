import { readFileSync, readdirSync } from 'node:fs';
import path from 'node:path';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { startServer, tempDirs, useTestServer } from './support/server.js';
import { SMALL_GRID } from './support/documents.js';

const validGrid = SMALL_GRID;

describe('machine maps over HTTP', () => {
  const ctx = useTestServer();

  it('answers health and readiness', async () => {
    await request(ctx.srv.url).get('/health').expect(200, { status: 'ok' });
    const r = await request(ctx.srv.url).get('/ready').expect(200);
    expect(r.body.status).toBe('ready');
    expect(r.body.machines).toBeGreaterThanOrEqual(2);
    expect(r.body.problems).toEqual([]);
  });

  it('lists and summarises the demo machines', async () => {
    const r = await request(ctx.srv.url).get('/v1/machines').expect(200);
    const names = r.body.machines.map((m: { name: string }) => m.name);
    expect(names).toContain('sun-machine');
    expect(names).toContain('ring-machine');
    const s = await request(ctx.srv.url).get('/v1/machines/sun-machine').expect(200);
    expect(s.body.kind).toBe('grid');
    // Peak efficiency of a machine with its inverter lies between 80 % and 100 % (common practice).
    expect(s.body.summary.peakEfficiency.motoring.efficiency).toBeGreaterThan(0.8);
    expect(s.body.summary.peakEfficiency.motoring.efficiency).toBeLessThan(1);
    expect(s.body.summary.maxTorqueNm).toBe(90);
  });

  it('creates, replaces and deletes a map; the file is written atomically under DATA_DIR', async () => {
    await request(ctx.srv.url).put('/v1/machines/test-a').send(validGrid).expect(201);
    await request(ctx.srv.url).put('/v1/machines/test-a').send({ ...validGrid, description: 'second' }).expect(200);
    const stored = JSON.parse(readFileSync(path.join(ctx.dirs.dataDir, 'machines', 'test-a.json'), 'utf8'));
    expect(stored.description).toBe('second');
    expect(readdirSync(path.join(ctx.dirs.dataDir, 'machines')).filter((f) => f.endsWith('.tmp'))).toEqual([]);
    await request(ctx.srv.url).delete('/v1/machines/test-a').expect(204);
    await request(ctx.srv.url).get('/v1/machines/test-a').expect(404);
  });

  it('a failed PUT leaves the old document untouched', async () => {
    await request(ctx.srv.url).put('/v1/machines/keep-me').send(validGrid).expect(201);
    const before = readFileSync(path.join(ctx.dirs.dataDir, 'machines', 'keep-me.json'), 'utf8');
    const bad = await request(ctx.srv.url).put('/v1/machines/keep-me').send({ ...validGrid, speedRpm: [0, 4000, 2000] }).expect(422);
    expect(bad.body.error.code).toBe('map-invalid');
    expect(readFileSync(path.join(ctx.dirs.dataDir, 'machines', 'keep-me.json'), 'utf8')).toBe(before);
    const s = await request(ctx.srv.url).get('/v1/machines/keep-me').expect(200);
    expect(s.body.description).toBe('test map');
  });

  const invalid: Array<[string, unknown, number, string, string | undefined]> = [
    ['descending speed axis', { ...validGrid, speedRpm: [0, 4000, 2000] }, 422, 'map-invalid', 'speedRpm[2]'],
    ['string in a number field', { ...validGrid, torqueNm: [-50, '0', 50] }, 422, 'map-invalid', 'torqueNm[1]'],
    ['efficiency above 1', { ...validGrid, lossW: undefined, efficiency: [[0.9, null, 0.9], [0.9, null, 1.2], [0.9, null, 0.9]] }, 422, 'map-invalid', 'efficiency[1][2]'],
    ['negative loss', { ...validGrid, lossW: [[100, 50, 100], [300, -1, 300], [600, 400, 600]] }, 422, 'map-invalid', 'lossW[1][1]'],
    ['grid shape wrong', { ...validGrid, lossW: [[100, 50], [300, 150, 300], [600, 400, 600]] }, 422, 'map-invalid', 'lossW[0]'],
    ['speed axis short of max speed', { ...validGrid, maxSpeedRpm: 5000 }, 422, 'map-invalid', 'speedRpm[2]'],
    ['envelope outside torque axis', { ...validGrid, maxTorqueNm: [50, 60, 30] }, 422, 'map-invalid', 'maxTorqueNm[1]'],
    ['unknown kind', { ...validGrid, kind: 'table' }, 422, 'map-invalid', 'kind'],
    ['unknown field', { ...validGrid, colour: 'red' }, 422, 'map-invalid', undefined],
    ['axis too long', { ...validGrid, torqueNm: Array.from({ length: 401 }, (_, i) => i - 200) }, 422, 'map-invalid', 'torqueNm'],
  ];
  for (const [label, body, status, code, p] of invalid) {
    it(`refuses ${label} with ${code}`, async () => {
      const r = await request(ctx.srv.url).put('/v1/machines/bad-one').send(body as object).expect(status);
      expect(r.body.error.code).toBe(code);
      expect(typeof r.body.error.message).toBe('string');
      if (p !== undefined) expect(r.body.error.path).toBe(p);
    });
  }

  it('refuses NaN, Infinity and broken JSON as invalid-json', async () => {
    for (const text of ['{"kind":"grid","maxSpeedRpm":NaN}', '{"maxSpeedRpm":Infinity}', '{"kind":']) {
      const r = await request(ctx.srv.url).put('/v1/machines/bad-one').set('content-type', 'application/json').send(text).expect(400);
      expect(r.body.error.code).toBe('invalid-json');
    }
  });

  it('refuses a body over the size limit with too-large', async () => {
    const huge = JSON.stringify({ ...validGrid, description: 'x'.repeat(9 * 1024 * 1024) });
    const r = await request(ctx.srv.url).put('/v1/machines/bad-one').set('content-type', 'application/json').send(huge);
    expect(r.status).toBe(413);
    expect(r.body.error.code).toBe('too-large');
  });

  it('refuses names that could reach a file path', async () => {
    for (const name of ['..%2F..%2Fetc%2Fpasswd', 'UPPER', '-lead', 'a'.repeat(65), '.hidden', 'a%00b', 'x.json']) {
      const r = await request(ctx.srv.url).put(`/v1/machines/${name}`).send(validGrid);
      expect([400, 404]).toContain(r.status);
      expect(['invalid-name', 'not-found']).toContain(r.body.error.code);
    }
    expect(readdirSync(ctx.dirs.dataDir).sort()).toEqual(['drivetrains', 'machines'].filter((d) => readdirSync(ctx.dirs.dataDir).includes(d)));
  });

  it('refuses deleting a shipped map and unknown names', async () => {
    const r = await request(ctx.srv.url).delete('/v1/machines/sun-machine').expect(409);
    expect(r.body.error.code).toBe('read-only');
    const n = await request(ctx.srv.url).delete('/v1/machines/no-such').expect(404);
    expect(n.body.error.code).toBe('not-found');
  });

  it('accepts a grid map as CSV (long format) equal to the JSON document', async () => {
    const lines = ['# maxSpeedRpm=4000', 'speedRpm,torqueNm,lossW'];
    validGrid.speedRpm.forEach((n, i) => validGrid.torqueNm.forEach((t, j) => lines.push(`${n},${t},${validGrid.lossW[i]![j]}`)));
    lines.push('speedRpm,maxTorqueNm,minTorqueNm');
    validGrid.speedRpm.forEach((n, i) => lines.push(`${n},${validGrid.maxTorqueNm[i]},${validGrid.minTorqueNm[i]}`));
    await request(ctx.srv.url).put('/v1/machines/from-csv?kind=grid').set('content-type', 'text/csv').send(lines.join('\n')).expect(201);
    await request(ctx.srv.url).put('/v1/machines/from-json').send(validGrid).expect(201);
    const a = await request(ctx.srv.url).get('/v1/machines/from-csv').expect(200);
    const b = await request(ctx.srv.url).get('/v1/machines/from-json').expect(200);
    expect({ ...a.body.summary, name: "" }).toEqual({ ...b.body.summary, name: "" });
    const noKind = await request(ctx.srv.url).put('/v1/machines/from-csv').set('content-type', 'text/csv').send(lines.join('\n')).expect(400);
    expect(noKind.body.error.code).toBe('invalid-request');
    const bad = [...lines];
    bad[2] = '0,-50,abc';
    const broken = await request(ctx.srv.url).put('/v1/machines/from-csv?kind=grid').set('content-type', 'text/csv').send(bad.join('\n')).expect(422);
    expect(broken.body.error.code).toBe('map-invalid');
    expect(broken.body.error.path).toMatch(/csv line 3/);
  });
});

describe('persistence', () => {
  it('an uploaded map survives a restart', async () => {
    const dirs = tempDirs();
    try {
      const a = await startServer(dirs);
      await request(a.url).put('/v1/machines/persisted').send(validGrid).expect(201);
      await a.close();
      const b = await startServer(dirs);
      const r = await request(b.url).get('/v1/machines/persisted').expect(200);
      expect(r.body.origin).toBe('data');
      expect(r.body.summary.grid.speedNodes).toBe(3);
      await b.close();
    } finally {
      dirs.cleanup();
    }
  });
});
