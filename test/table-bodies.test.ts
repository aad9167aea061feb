/**
 * Table bodies: the CSV and C header writers give exactly the bytes of the reference writers
 * (test/support/tableTextReference.ts) on random tables and on a solved one; a body solved,
 * joined and rendered on the worker pool equals the text of the table built in process; and
 * over HTTP a large table is formatted on the pool while /health is answered, with the same
 * bytes as in-process formatting. Order of events only; no timing.
 */
import fc from 'fast-check';
import request from 'supertest';
import { afterAll, describe, expect, it } from 'vitest';
import { tableBodyPooled } from '../src/api/tableBodyRunner.js';
import { tableToCHeader } from '../src/report/cHeader.js';
import { tableBody } from '../src/report/tableBody.js';
import { tableToCsv } from '../src/report/tableCsv.js';
import { tableToJson } from '../src/report/tableJson.js';
import { buildDrivetrain } from '../src/solver/drivetrain.js';
import { buildTable } from '../src/solver/table.js';
import { buildTablePooled, TablePool } from '../src/solver/tablePool.js';
import { CELL_FLOAT_FIELDS, type LookupTable, type TableCells } from '../src/solver/tableResult.js';
import { resolveTableSpec, TABLE_FORMATS, type TableFormat, type TableSpecInput } from '../src/solver/tableSpec.js';
import type { WorkerScript } from '../src/solver/workerScript.js';
import { contentHash } from '../src/store/hash.js';
import { useTestServer } from './support/server.js';
import { AXLE_DOC, testMachines } from './support/tableFixture.js';
import { referenceTableCHeader, referenceTableCsv } from './support/tableTextReference.js';

/** Doubles of every kind a table may hold (NaN is "no value"), and a few beyond. */
const value = fc.oneof(
  fc.double(),
  fc.float(),
  fc.integer({ min: -100_000, max: 100_000 }),
  fc.constantFrom(Number.NaN, -0, 0, 0.1, 1e21, 1e-7, 3.5e38, -1e-45, 0.125),
);
const values = (n: number) => fc.array(value, { minLength: n, maxLength: n }).map((a) => Float64Array.from(a));
const bytes = (n: number, max: number) => fc.array(fc.integer({ min: 0, max }), { minLength: n, maxLength: n }).map((a) => Uint8Array.from(a));

/** A table of random contents; rows of 0 to 19 values cover empty, short, full and wrapped C lines. */
const randomTable: fc.Arbitrary<LookupTable> = fc
  .record({ nSpeed: fc.integer({ min: 0, max: 4 }), nTorque: fc.integer({ min: 0, max: 19 }) })
  .chain(({ nSpeed, nTorque }) => {
    const n = nSpeed * nTorque;
    return fc.record({
      drivetrain: fc.constantFrom('van-axle', '9 lives', '--', 'axle·2', 'a*/b'),
      hash: fc.option(fc.string({ maxLength: 12 }), { nil: null }),
      generatedAt: fc.constant('2025-01-02T03:04:05.678Z'),
      parameters: fc.record({
        speedAxis: fc.oneof(fc.constant({ from: 0, to: 100, steps: nSpeed }), fc.array(fc.double({ noNaN: true }), { minLength: 1, maxLength: 3 })),
        torqueAxis: fc.constant({ from: -10.5, to: 10.5, steps: nTorque }),
        modes: fc.constantFrom(null, ['split' as const], ['locked' as const, 'ring-held' as const]),
        strict: fc.boolean(),
        modeSwitchMarginW: fc.double({ min: 0, max: 1e7, noNaN: true }),
      }),
      nSpeed: fc.constant(nSpeed),
      nTorque: fc.constant(nTorque),
      speedRpm: values(nSpeed),
      torqueNm: values(nTorque),
      cells: fc.record({
        feasible: bytes(n, 2),
        mode: bytes(n, 255),
        ...Object.fromEntries(CELL_FLOAT_FIELDS.map((f) => [f, values(n)])),
      }) as unknown as fc.Arbitrary<TableCells>,
      envelope: fc.record({ maxMotoringWheelNm: values(nSpeed), maxBrakingWheelNm: values(nSpeed) }),
      smoothness: fc.record({
        modeSwitchMarginW: fc.double({ noNaN: true }),
        modeChanges: fc.nat(),
        modeChangesAlongSpeed: fc.nat(),
        modeChangesAlongTorque: fc.nat(),
        modeChangesWithoutMargin: fc.nat(),
        cellsReassigned: fc.nat(),
        maxExtraBatteryW: fc.double({ noNaN: true }),
        maxJump: fc.record({ sunSpeedRpm: fc.double(), sunTorqueNm: fc.double(), ringTorqueNm: fc.double() }),
      }),
    });
  });

const maps = testMachines();
const dt = buildDrivetrain('test-axle', AXLE_DOC, (n) => maps.get(n));
// Standstill, reverse, beyond top speed; braking, zero and motoring torque; a margin that reassigns.
const solved = buildTable(
  dt,
  { speedRpm: [-300, 0, 250, 700, 1200, 1700, 2400], torqueNm: { from: -2800, to: 2800, steps: 17 }, modeSwitchMarginW: 250 },
  { hash: 'sha256:5d1e' },
);

describe('table writers', () => {
  it('write the reference CSV and C header bytes for random tables', () => {
    fc.assert(
      fc.property(randomTable, (t) => tableToCsv(t) === referenceTableCsv(t) && tableToCHeader(t) === referenceTableCHeader(t)),
      { numRuns: 300 },
    );
  });

  it('write the reference bytes for a solved table, and tableBody picks the format', () => {
    expect(tableToCsv(solved)).toBe(referenceTableCsv(solved));
    expect(tableToCHeader(solved)).toBe(referenceTableCHeader(solved));
    expect(tableBody(solved, 'csv')).toBe(referenceTableCsv(solved));
    expect(tableBody(solved, 'c')).toBe(referenceTableCHeader(solved));
    expect(tableBody(solved, 'json')).toBe(JSON.stringify(tableToJson(solved)));
  });
});

/** The generation time a body carries (the C header's comment, JSON's field; CSV has none). */
function generatedAtOf(body: string, format: TableFormat): string | undefined {
  if (format === 'c') return /Generated by episplit at (\S+Z)\./.exec(body)?.[1];
  if (format === 'json') return (JSON.parse(body) as { generatedAt: string }).generatedAt;
  return undefined;
}

describe('table bodies on the worker pool', () => {
  const pool = new TablePool({ threads: 2 });
  afterAll(() => pool.close());

  it('equal the text of the table built in process, in every format', async () => {
    const input: TableSpecInput = { speedRpm: [-300, 0, 250, 700, 1200, 1700, 2400], torqueNm: { from: -2800, to: 2800, steps: 17 }, modeSwitchMarginW: 250 };
    for (const format of TABLE_FORMATS) {
      const spec = resolveTableSpec({ ...input, format });
      const body = await tableBodyPooled(pool, dt, 'drivetrain-under-test', spec, 'sha256:5d1e');
      expect(Buffer.isBuffer(body)).toBe(true);
      const text = body.toString('utf8');
      const local = buildTable(dt, spec.spec, { hash: 'sha256:5d1e' });
      if (format !== 'csv') local.generatedAt = generatedAtOf(text, format)!;
      expect(text).toBe(tableBody(local, format));
    }
  });
});

describe('large tables over HTTP', () => {
  const ctx = useTestServer();
  // 241 × 241 locked-mode cells: the C header took about a second on the event loop before its
  // formatting moved to the pool (measured; speed itself is not asserted here).
  const big: TableSpecInput = { speedRpm: { from: 0, to: 1600, steps: 241 }, torqueNm: { from: -2500, to: 2500, steps: 241 }, modes: ['locked'] };

  function post(body: unknown): Promise<{ status: number; etag: string | null; text: string }> {
    return fetch(`${ctx.srv.url}/v1/drivetrains/van-axle/tables`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify(body),
    }).then(async (res) => ({ status: res.status, etag: res.headers.get('etag'), text: await res.text() }));
  }

  /** Watches the pool's table-body tasks: when the first starts, and how many have finished. */
  function watchBodies() {
    const pool = ctx.srv.app.workers.get();
    const runScript = pool.runScript.bind(pool);
    const seen = { started: 0, finished: 0 };
    let onStart!: () => void;
    const firstStart = new Promise<void>((resolve) => (onStart = resolve));
    pool.runScript = <T, R>(script: WorkerScript, task: T, signal?: AbortSignal): Promise<R> => {
      const run = runScript<T, R>(script, task, signal);
      if (script.filename.includes('tableBodyWorker')) {
        seen.started++;
        onStart();
        void run.finally(() => seen.finished++).catch(() => undefined);
      }
      return run;
    };
    return { seen, firstStart, restore: () => (pool.runScript = runScript) };
  }

  /** The body formatted in process from the same table (built on the same pool, same record). */
  async function inProcess(spec: TableSpecInput, format: TableFormat, generatedAt: string): Promise<string> {
    const entry = ctx.srv.app.registry.getDrivetrainEntry('van-axle')!;
    const resolved = resolveTableSpec({ ...spec, format });
    const hash = contentHash(ctx.srv.app.registry.drivetrainContentHash(entry), resolved.spec);
    const table = await buildTablePooled(ctx.srv.app.registry.getDrivetrain('van-axle')!, resolved.spec, { pool: ctx.srv.app.workers.get(), hash });
    table.generatedAt = generatedAt;
    return tableBody(table, format);
  }

  it('formats a large C header on the pool while /health answers, with the in-process bytes', async () => {
    const watch = watchBodies();
    try {
      let tableDone = false;
      const pending = post({ ...big, format: 'c' }).then((r) => {
        tableDone = true;
        return r;
      });
      await watch.firstStart; // the table is built; its header is being formatted on a worker
      const health = await request(ctx.srv.url).get('/health').expect(200);
      expect(health.body.status).toBe('ok');
      expect(watch.seen.finished).toBe(0); // answered while the header was still being formatted
      expect(tableDone).toBe(false);
      const r = await pending;
      expect(r.status).toBe(200);
      const generatedAt = generatedAtOf(r.text, 'c');
      expect(generatedAt).toBeDefined();
      expect(r.text).toBe(await inProcess(big, 'c', generatedAt!));

      // The same request again: served from the cache (no formatting), same bytes and ETag; 304 on match.
      const again = await post({ ...big, format: 'c' });
      expect(again.text).toBe(r.text);
      expect(again.etag).toBe(r.etag);
      expect(watch.seen.started).toBe(1);
      await request(ctx.srv.url).post('/v1/drivetrains/van-axle/tables').set('if-none-match', r.etag!).send({ ...big, format: 'c' }).expect(304);
    } finally {
      watch.restore();
    }
  });

  it('formats CSV and JSON of a pooled table on the pool with the in-process bytes', async () => {
    const watch = watchBodies();
    try {
      const spec: TableSpecInput = { speedRpm: { from: 0, to: 1600, steps: 81 }, torqueNm: { from: -2500, to: 2500, steps: 81 }, modeSwitchMarginW: 50 };
      const csv = await post({ ...spec, format: 'csv' });
      expect(csv.status).toBe(200);
      expect(csv.text).toBe(await inProcess(spec, 'csv', 'not in the CSV'));
      const json = await post({ ...spec, format: 'json' });
      expect(json.status).toBe(200);
      expect(json.text).toBe(await inProcess(spec, 'json', generatedAtOf(json.text, 'json')!));
      expect(watch.seen.finished).toBe(2);
    } finally {
      watch.restore();
    }
  });
});
