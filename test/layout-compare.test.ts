import { describe, it, expect } from 'vitest';
import { compareLayouts, layoutVariant } from '../src/vehicle/compare.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { validateCycleTrace } from '../src/vehicle/schema.js';
import { testDrivetrain, testVehicle } from './support/syntheticDrivetrain.js';

const trapezoid = validateCycleTrace({ name: 'trapezoid', timeS: [0, 10, 30, 40], speedKph: [0, 72, 72, 0] });

describe('layout comparison', () => {
  it('gives every layout the same energy on a lossless drivetrain', () => {
    // Without losses every layout turns battery energy into wheel work one to one: 42.891625 Wh
    // for this trace (rolling 88 259.85 J + aerodynamic 66 150 J, hand calculation in
    // test/cycle-energy.test.ts; road load as in Gillespie ch. 4).
    const c = compareLayouts(testDrivetrain({ lossless: true }), testVehicle(), trapezoid);
    expect(c.rows.map((r) => r.layout)).toEqual(['sun-alone', 'ring-alone', 'split-only', 'full']);
    for (const r of c.rows) {
      expect(r.unfollowedSteps).toBe(0);
      expect(r.batteryWh).toBeCloseTo(42.891625, 6);
      expect(r.savingsPct!).toBeCloseTo(0, 6);
    }
  });

  it('measures savings against the worst layout that follows the cycle', () => {
    const dt = testDrivetrain();
    const c = compareLayouts(dt, testVehicle({ auxiliaryW: 300 }), getBuiltinCycle('nedc'));
    const by = Object.fromEntries(c.rows.map((r) => [r.layout, r]));
    // The sun machine alone runs out of speed above (12 000 rpm)/(3.6 × 4) → 94.2 km/h at r = 0.3 m.
    expect(by['sun-alone']!.unfollowedSteps).toBeGreaterThan(0);
    const followers = c.rows.filter((r) => r.unfollowedSteps === 0);
    const worst = Math.max(...followers.map((r) => r.whPerKm!));
    expect(by[c.baseline]!.whPerKm).toBe(worst);
    expect(by[c.baseline]!.savingsPct).toBe(0);
    for (const r of c.rows) expect(r.savingsPct!).toBeCloseTo((100 * (worst - r.whPerKm!)) / worst, 9);
    // More modes can only help here: released devices draw nothing in this drivetrain.
    expect(by.full!.whPerKm!).toBeLessThanOrEqual(by['split-only']!.whPerKm! + 1e-9);
    expect(by.full!.savingsPct!).toBeGreaterThan(0);
  });

  it('fits a powerless brake for a single-machine layout and removes other devices', () => {
    const doc = testDrivetrain({ devices: false }).doc;
    const v = layoutVariant(doc, 'ring-alone');
    expect(v.doc.devices).toEqual({ sunBrake: { engagedW: 0, releasedW: 0 } });
    expect(v.modes).toEqual(['sun-held']);
    expect(layoutVariant(testDrivetrain().doc, 'split-only').doc.devices).toBeUndefined();
  });
});
