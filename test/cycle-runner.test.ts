/**
 * Cycle jobs on the worker pool: the body a worker renders equals the in-process one exactly,
 * the threads are shared with tables, and a ModelError raised inside the worker comes back as a
 * ModelError with the same code, message and path.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { cycleBodyPooled } from '../src/api/cycleRunner.js';
import { cycleBody } from '../src/api/cycleWorker.js';
import { ModelError } from '../src/problem.js';
import { plotCycle } from '../src/report/svg/plotCycle.js';
import { buildTable } from '../src/solver/table.js';
import { buildTablePooled, TablePool } from '../src/solver/tablePool.js';
import { runCycleJob } from '../src/vehicle/cycleJob.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { validateCycleTrace } from '../src/vehicle/schema.js';
import { catchModelError } from './support/modelError.js';
import { testDrivetrain, testVehicle } from './support/syntheticDrivetrain.js';

describe('cycle jobs on the worker pool', () => {
  // Threads start on first use (piscina minThreads 0).
  const pool = new TablePool({ threads: 2 });
  afterAll(() => pool.close());
  const dt = testDrivetrain();
  const vehicle = testVehicle({ auxiliaryW: 300 });
  const nedc = getBuiltinCycle('nedc');

  it('render the same JSON as the in-process job (comparison, bounds, series)', async () => {
    const options = { compare: true, switchCostsWh: [0, 0.3], series: true, usableBatteryWh: 40_000 };
    const local = runCycleJob(dt, vehicle, nedc, options);
    const pooled = await cycleBodyPooled(pool, dt, { vehicle, cycle: nedc, options }, 'json', { key: 'lossy-test' });
    expect(pooled).toBe(JSON.stringify(local));
    expect(JSON.parse(pooled)).toStrictEqual(JSON.parse(JSON.stringify(local)));
    // Restricted modes, the drivetrain cached in the workers, and a job without a key.
    const trace = validateCycleTrace({ timeS: [0, 5, 15, 25, 30], speedKph: [0, 40, 90, 30, 0], gradePct: [0, 4, 4, -6, 0] });
    const o2 = { modes: ['split' as const, 'ring-held' as const], switchCostsWh: [0.1] };
    const want = JSON.stringify(runCycleJob(dt, vehicle, trace, o2));
    expect(await cycleBodyPooled(pool, dt, { vehicle, cycle: trace, options: o2 }, 'json', { key: 'lossy-test' })).toBe(want);
    expect(await cycleBodyPooled(pool, dt, { vehicle, cycle: trace, options: o2 }, 'json')).toBe(want);
  });

  it('render the same SVG as a plot of the in-process run', async () => {
    const options = { series: true };
    const svg = await cycleBodyPooled(pool, dt, { vehicle, cycle: nedc, options }, 'svg', { key: 'lossy-test' });
    const { result } = runCycleJob(dt, vehicle, nedc, options);
    expect(svg).toBe(plotCycle(result, { title: `${dt.name}: ${result.cycle}` }));
    expect(svg).toBe(cycleBody(dt, vehicle, nedc, options, 'svg'));
  });

  it('share the threads with tables', async () => {
    const spec = { speedRpm: { from: 0, to: 2000, steps: 9 }, torqueNm: { from: -2000, to: 2000, steps: 9 } };
    const cycle = getBuiltinCycle('demo-delivery');
    const [table, body] = await Promise.all([
      buildTablePooled(dt, spec, { pool, hash: 't1' }),
      cycleBodyPooled(pool, dt, { vehicle, cycle, options: {} }, 'json', { key: 'lossy-test' }),
    ]);
    expect(Array.from(table.cells.batteryW as ArrayLike<number>)).toEqual(Array.from(buildTable(dt, spec).cells.batteryW as ArrayLike<number>));
    expect(body).toBe(JSON.stringify(runCycleJob(dt, vehicle, cycle, {})));
  });

  it('return a ModelError raised in the worker with its code, message and path', async () => {
    // A wheel radius of zero (refused by the vehicle schema, so only reachable from code) makes
    // the solver refuse the first wheel speed.
    const broken = { ...vehicle, wheelRadiusM: 0 };
    const trace = validateCycleTrace({ timeS: [0, 10], speedKph: [0, 10] });
    const local = catchModelError(() => runCycleJob(dt, broken, trace, {}));
    const err = await cycleBodyPooled(pool, dt, { vehicle: broken, cycle: trace, options: {} }, 'json').then(
      () => undefined,
      (e: unknown) => e,
    );
    expect(err).toBeInstanceOf(ModelError);
    const e = err as ModelError;
    expect([e.code, e.message, e.path]).toEqual([local.code, local.message, local.path]);
    expect(e.path).toBe('wheelSpeedRpm');
  });
});
