import { describe, it, expect } from 'vitest';
import { launchCheck } from '../src/vehicle/launch.js';
import { roadLoadForceN } from '../src/vehicle/roadLoad.js';
import { wheelTorqueLimits } from '../src/solver/envelope.js';
import { testDrivetrain, testVehicle } from './support/syntheticDrivetrain.js';

const dt = testDrivetrain(); // Zs 30, Zr 78 (k = 2.6), η0 0.98, i_fd 4, η_fd 0.97, r 0.3 m; sun 200 N·m / 12 000 rpm

describe('launch and top-speed check', () => {
  it('gives the held-mode launch torque of the planetary relations', () => {
    // Ring held at standstill (DESIGN §4 standstill rule; Müller, Epicyclic Drive Trains):
    // T_out = T_s·(1 + k·η0) = 200 × (1 + 2.6 × 0.98) = 709.6 N·m; wheel: ×i_fd·η_fd = 709.6 × 4 × 0.97 = 2753.248 N·m.
    const c = launchCheck(dt, testVehicle({ rotatingMassFactor: 0.05 }), { modes: ['ring-held'] });
    expect(c.launchWheelTorqueNm).toBeCloseTo(2753.248, 6);
    // a = T/(r·m·(1 + δ)) = 2753.248/(0.3 × 1500 × 1.05) = 5.8270 m/s².
    expect(c.launchAccelMs2).toBeCloseTo(5.827, 3);
  });

  it('stops at the machine speed limit when the road load allows more', () => {
    // Ring held (ratio 1 + k, Shigley, gear-train chapter): sun speed = (1 + k)·i_fd·ω_wheel = 14.4·ω_wheel; 12 000 rpm → 833.33 rpm at the
    // wheel → 87.266 rad/s × 0.3 m = 26.180 m/s = 94.248 km/h.
    const c = launchCheck(dt, testVehicle(), { modes: ['ring-held'] });
    expect(c.topSpeedLimit).toBe('machine-speed');
    expect(Math.abs(c.topSpeedKph - 94.248)).toBeLessThan(0.06);
  });

  it('stops where the largest wheel torque meets the road load', () => {
    const brick = testVehicle({ dragAreaM2: 3 });
    const c = launchCheck(dt, brick);
    expect(c.topSpeedLimit).toBe('road-load');
    const surplus = (kph: number) => {
      const v = kph / 3.6;
      return wheelTorqueLimits(dt, ((v / 0.3) * 30) / Math.PI).maxMotoringWheelNm - roadLoadForceN(brick, v, 0, 0) * 0.3;
    };
    expect(surplus(c.topSpeedKph)).toBeGreaterThanOrEqual(0);
    expect(surplus(c.topSpeedKph + 0.06)).toBeLessThan(0);
  });
});
