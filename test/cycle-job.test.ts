/**
 * One cycle job solves each cycle as few times as its answer allows (the run with per-mode
 * energies serves the bounds and, when it considers every mode, the `full` layout). Its answer
 * must equal, bit for bit, the separate computations it replaces: one run for the result, one per
 * layout, one for the bounds.
 */
import { describe, expect, it } from 'vitest';
import { cycleBounds } from '../src/vehicle/bound.js';
import { compareLayouts } from '../src/vehicle/compare.js';
import { runCycle } from '../src/vehicle/cycleEnergy.js';
import { cycleJobRuns, runCycleJob, type CycleJobOptions } from '../src/vehicle/cycleJob.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { validateCycleTrace, type Cycle, type Vehicle } from '../src/vehicle/schema.js';
import type { Drivetrain } from '../src/solver/drivetrain.js';
import { testDrivetrain, testVehicle } from './support/syntheticDrivetrain.js';

/** The answer computed the way the service did before runs were shared. */
function separately(dt: Drivetrain, vehicle: Vehicle, cycle: Cycle, o: CycleJobOptions) {
  const solve = o.modes ? { modes: o.modes } : {};
  const result = runCycle(dt, vehicle, cycle, {
    solve,
    series: o.series ?? false,
    ...(o.usableBatteryWh !== undefined ? { usableBatteryWh: o.usableBatteryWh } : {}),
  });
  return {
    result,
    ...(o.compare ? { comparison: compareLayouts(dt, vehicle, cycle, { solve }) } : {}),
    ...(o.switchCostsWh ? { bounds: cycleBounds(dt, vehicle, cycle, o.switchCostsWh, { solve }) } : {}),
  };
}

/** Fast, steep and braking hard: steps beyond the limits of some modes and of the whole drivetrain. */
const hard = validateCycleTrace({
  name: 'hard',
  timeS: [0, 8, 20, 35, 50, 60, 75, 90, 100, 110],
  speedKph: [0, 60, 120, 190, 190, 150, 60, 80, 20, 0],
  gradePct: [0, 5, 12, 30, 30, -20, -25, 8, 0, 0],
});

describe('a cycle job with comparison and bounds', () => {
  const dt = testDrivetrain();
  const car = testVehicle({ auxiliaryW: 300, regen: { maxFraction: 0.8, minSpeedKph: 5 } });
  const cases: { name: string; dt: Drivetrain; cycle: Cycle; opts: CycleJobOptions }[] = [
    { name: 'every mode, no series', dt, cycle: getBuiltinCycle('nedc'), opts: { compare: true, switchCostsWh: [0, 0.05, 1], usableBatteryWh: 50_000 } },
    { name: 'every mode, with series', dt, cycle: getBuiltinCycle('nedc'), opts: { compare: true, switchCostsWh: [0.2], series: true } },
    { name: 'every mode listed in another order', dt, cycle: hard, opts: { compare: true, switchCostsWh: [0, 0.5], modes: ['locked', 'sun-held', 'ring-held', 'split'] } },
    { name: 'a restricted set of modes (the full layout runs apart)', dt, cycle: getBuiltinCycle('nedc'), opts: { compare: true, switchCostsWh: [0, 0.5], modes: ['split', 'locked'] } },
    { name: 'split only on a drivetrain without devices (every mode it allows)', dt: testDrivetrain({ devices: false }), cycle: getBuiltinCycle('demo-delivery'), opts: { compare: true, switchCostsWh: [1], modes: ['split'] } },
    { name: 'bounds alone', dt, cycle: hard, opts: { switchCostsWh: [0, 0.1] } },
    { name: 'comparison alone', dt, cycle: hard, opts: { compare: true } },
  ];

  for (const c of cases) {
    it(`equals the separate runs exactly: ${c.name}`, () => {
      const shared = runCycleJob(c.dt, car, c.cycle, c.opts);
      // toStrictEqual compares numbers with Object.is: every figure is bit-identical.
      expect(shared).toStrictEqual(separately(c.dt, car, c.cycle, c.opts));
      expect('modeEnergyWh' in shared.result || 'modeIndex' in shared.result || 'stepDurationS' in shared.result).toBe(false);
    });
  }

  it('counts the runs of the cycle it makes, which the service caps', () => {
    expect(cycleJobRuns(dt, {})).toBe(1);
    expect(cycleJobRuns(dt, { compare: true })).toBe(4); // its own run is the full layout
    expect(cycleJobRuns(dt, { compare: true, modes: ['locked', 'sun-held', 'ring-held', 'split'] })).toBe(4);
    expect(cycleJobRuns(dt, { compare: true, modes: ['split', 'locked'] })).toBe(5);
    const noDevices = testDrivetrain({ devices: false });
    expect(cycleJobRuns(noDevices, { compare: true, modes: ['split'] })).toBe(4);
  });

  it('covers steps the drivetrain cannot follow and bounds that spend time in several modes', () => {
    const a = runCycleJob(dt, car, hard, { compare: true, switchCostsWh: [0] });
    expect(a.result.unfollowed.length).toBeGreaterThan(0);
    expect(Object.keys(a.bounds![0]!.boundModeTimeS).length).toBeGreaterThan(1);
    const full = a.comparison!.rows.find((r) => r.layout === 'full')!;
    expect(full.batteryWh).toBe(a.result.batteryWh);
    expect(full.unfollowedSteps).toBe(a.result.unfollowed.length);
    // Without ring-held (used on the NEDC by the full layout) the result differs from the full row.
    const restricted = runCycleJob(dt, car, getBuiltinCycle('nedc'), { compare: true, modes: ['split', 'locked'] });
    expect(restricted.comparison!.rows.find((r) => r.layout === 'full')!.batteryWh).toBeLessThan(restricted.result.batteryWh);
  });
});
