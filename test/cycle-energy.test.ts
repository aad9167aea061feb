import { describe, it, expect } from 'vitest';
import { accountedEnergyWh, runCycle } from '../src/vehicle/cycleEnergy.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { parseCycleCsv, parseCycleInput, parseVehicle, validateCycleTrace } from '../src/vehicle/schema.js';
import { wheelTorqueLimits } from '../src/solver/envelope.js';
import { testDrivetrain, testVehicle } from './support/syntheticDrivetrain.js';
import { catchModelError } from './support/modelError.js';

/** 0 → 72 km/h in 10 s, 20 s at 72 km/h, 72 → 0 km/h in 10 s (samples at 0, 10, 30, 40 s). */
const trapezoid = validateCycleTrace({ name: 'trapezoid', timeS: [0, 10, 30, 40], speedKph: [0, 72, 72, 0] });


describe('cycle energy on a lossless drivetrain', () => {
  const dt = testDrivetrain({ lossless: true });
  const car = testVehicle(); // 1500 kg, Crr 0.01, CdA 0.6 m², ρ 1.225, no auxiliary load

  it('equals the rolling plus aerodynamic work: kinetic energy comes back in full', () => {
    // Hand calculation (road load of Gillespie ch. 4 on the step means; g = 9.80665 m/s²):
    //   steps: v̄ = 10 m/s for 10 s, 20 m/s for 20 s, 10 m/s for 10 s; distance 100 + 400 + 100 = 600 m
    //   rolling  m·g·Crr·distance = 1500 × 9.80665 × 0.01 × 600 = 88 259.85 J
    //   aero     ½ρ·CdA·Σ v̄³Δt = 0.3675 × (10³·10 + 20³·20 + 10³·10) = 0.3675 × 180 000 = 66 150 J
    //   total    154 409.85 J = 42.891625 Wh
    // The inertial work m·a·v̄·Δt is +300 000 J in step 1 and −300 000 J in step 3 and cancels.
    const r = runCycle(dt, car, trapezoid);
    expect(r.distanceKm).toBeCloseTo(0.6, 12);
    expect(r.batteryWh).toBeCloseTo(42.891625, 6);
    expect(r.unfollowed).toEqual([]);
    expect(r.frictionBrakedWh).toBe(0);
    // Braking step: F = −3000 + 147.09975 + 36.75 = −2816.15025 N at 10 m/s for 10 s → −281 615.025 J.
    expect(r.regeneratedWh).toBeCloseTo(281615.025 / 3600, 6);
    // Tractive: (3000 + 147.09975 + 36.75)·100 + (147.09975 + 147)·400 = 318 384.975 + 117 639.9 J.
    expect(r.tractiveWh).toBeCloseTo((318384.975 + 117639.9) / 3600, 6);
    const l = r.losses;
    expect(l.sunMachineWh + l.ringMachineWh + l.meshWh + l.finalDriveWh + l.devicesWh + l.auxiliaryWh).toBeCloseTo(0, 9);
  });

  it('sends braking to friction brakes by the regeneration policy', () => {
    const braking = 281615.025 / 3600; // braking wheel work of the trapezoid (above), Wh
    const none = runCycle(dt, testVehicle({ regen: { maxFraction: 0 } }), trapezoid);
    expect(none.regeneratedWh).toBe(0);
    expect(none.frictionBrakedWh).toBeCloseTo(braking, 6);
    expect(none.batteryWh).toBeCloseTo(42.891625 + braking, 6);
    const slow = runCycle(dt, testVehicle({ regen: { minSpeedKph: 40 } }), trapezoid); // braking step's mean speed is 36 km/h
    expect(slow.frictionBrakedWh).toBeCloseTo(braking, 6);
    const half = runCycle(dt, testVehicle({ regen: { maxFraction: 0.5 } }), trapezoid);
    expect(half.regeneratedWh).toBeCloseTo(braking / 2, 6);
    expect(half.frictionBrakedWh).toBeCloseTo(braking / 2, 6);
  });

  it('gives the range on repeats of the cycle for a usable battery energy', () => {
    const r = runCycle(dt, car, trapezoid, { usableBatteryWh: 50_000 });
    expect(r.rangeKm).toBeCloseTo(50_000 / (42.891625 / 0.6), 6);
  });
});

describe('cycle energy on a lossy drivetrain', () => {
  const dt = testDrivetrain();

  it('closes the energy balance within 1e-6', () => {
    const car = testVehicle({ auxiliaryW: 400, rotatingMassFactor: 0.05, regen: { maxFraction: 0.8, minSpeedKph: 6 } });
    for (const id of ['nedc', 'demo-delivery'] as const) {
      const r = runCycle(dt, car, getBuiltinCycle(id));
      expect(r.unfollowed).toEqual([]);
      expect(r.losses.sunMachineWh).toBeGreaterThan(0);
      expect(r.losses.meshWh).toBeGreaterThan(0);
      expect(r.frictionBrakedWh).toBeGreaterThan(0);
      // battery = wheel work + friction-braked + machine, mesh, final-drive, device and auxiliary losses
      expect(Math.abs(r.batteryWh - accountedEnergyWh(r))).toBeLessThan(1e-6 * Math.abs(r.batteryWh));
      // Auxiliary energy: (150 W drivetrain + 400 W vehicle) over the whole cycle.
      expect(r.losses.auxiliaryWh).toBeCloseTo((550 * r.durationS) / 3600, 9);
      const modeTime = r.modes.reduce((s, m) => s + m.timeS, 0);
      expect(modeTime).toBeCloseTo(r.durationS, 9);
      expect(r.modes.reduce((s, m) => s + m.batteryWh, 0)).toBeCloseTo(r.batteryWh, 6);
    }
  });

  it('gives the same answer for the same cycle as CSV and as JSON', () => {
    const timeS = [0, 1, 2, 3.5, 5, 8, 11, 13, 14.5, 16];
    const speedKph = [0, 5, 12.5, 20, 31, 31, 24, 10, 3, 0];
    const gradePct = [0, 0, 1, 2, 4, 4, 2.5, 0, -1, -1];
    const csv = `# invented test trace\ntimeS,speedKph,gradePct\n${timeS.map((t, i) => `${t},${speedKph[i]},${gradePct[i]}`).join('\n')}\n`;
    const car = testVehicle({ auxiliaryW: 100 });
    const a = runCycle(dt, car, parseCycleCsv(csv, 'x'), { series: true });
    const b = runCycle(dt, car, parseCycleInput({ name: 'x', timeS, speedKph, gradePct }), { series: true });
    expect(a).toEqual(b);
    expect(a.series!.timeS.length).toBe(9);
  });

  it('delivers the largest available torque where the demand is beyond reach and counts the shortfall', () => {
    const truck = testVehicle({ massKg: 30_000 });
    const r = runCycle(dt, truck, trapezoid, { series: true });
    expect(r.unfollowed.length).toBeGreaterThan(0);
    const u = r.unfollowed.find((s) => s.timeS === 0)!;
    expect(u.reason).toBe('above-motoring-limit');
    // 30 000 kg at 2 m/s² asks for more than 60 kN at the wheel, far beyond the machines.
    expect(u.requestedWheelTorqueNm).toBeGreaterThan(18_000);
    const rpm = r.series!.wheelSpeedRpm[0]!;
    const limit = wheelTorqueLimits(dt, rpm).maxMotoringWheelNm;
    expect(u.deliveredWheelTorqueNm).toBeCloseTo(limit, 2);
    const w = (rpm * Math.PI) / 30;
    expect(r.shortfallWh).toBeGreaterThanOrEqual(((u.requestedWheelTorqueNm - u.deliveredWheelTorqueNm) * w * 10) / 3600 - 1e-9);
    expect(Math.abs(r.batteryWh - accountedEnergyWh(r))).toBeLessThan(1e-6 * Math.abs(r.batteryWh));
  });

  it('lists steps beyond every mode’s speed limit', () => {
    // Ring held alone: sun speed (1 + k)·i_fd·ω_wheel = 3.6 × 4 × ω_wheel (ring-held ratio, Shigley, gear-train chapter); 12 000 rpm allows 94.2 km/h.
    const fast = validateCycleTrace({ timeS: [0, 20, 40, 60], speedKph: [0, 120, 120, 0] });
    const r = runCycle(dt, testVehicle(), fast, { modes: ['ring-held'] });
    expect(r.unfollowed.map((s) => [s.timeS, s.reason])).toEqual([[20, 'above-max-speed']]);
    expect(r.unfollowed[0]!.deliveredWheelTorqueNm).toBe(0);
  });
});

describe('cycle and vehicle validation', () => {
  it('fills vehicle defaults (ISO 2533 sea-level air density 1.225 kg/m³)', () => {
    const v = parseVehicle({ massKg: 1200, rollingResistance: 0.009, dragAreaM2: 0.55 });
    expect(v).toEqual({ massKg: 1200, rotatingMassFactor: 0, rollingResistance: 0.009, dragAreaM2: 0.55, airDensity: 1.225, auxiliaryW: 0, regen: { maxFraction: 1, minSpeedKph: 0 } });
  });

  const cases: Array<[string, () => unknown, string, string]> = [
    ['unequal lengths', () => parseCycleInput({ timeS: [0, 1, 2], speedKph: [0, 1] }), 'cycle-invalid', 'cycle.speedKph'],
    ['a single sample', () => validateCycleTrace({ timeS: [0], speedKph: [0] }), 'cycle-invalid', 'cycle.timeS'],
    ['time not increasing', () => parseCycleInput({ timeS: [0, 1, 1, 2], speedKph: [0, 1, 2, 3] }), 'cycle-invalid', 'cycle.timeS[2]'],
    ['negative speed', () => parseCycleInput({ timeS: [0, 1, 2], speedKph: [0, -1, 0] }), 'cycle-invalid', 'cycle.speedKph[1]'],
    ['acceleration beyond 10 m/s²', () => parseCycleInput({ timeS: [0, 1, 2], speedKph: [0, 20, 60] }), 'cycle-invalid', 'cycle.speedKph[2]'],
    ['not a number', () => validateCycleTrace({ timeS: [0, Number.NaN], speedKph: [0, 1] }), 'cycle-invalid', 'cycle.timeS[1]'],
    ['JSON not a number', () => parseCycleInput({ timeS: [0, 1], speedKph: [0, 'x'] }), 'cycle-invalid', 'cycle.speedKph[1]'],
    ['grade length', () => parseCycleInput({ timeS: [0, 1], speedKph: [0, 1], gradePct: [0] }), 'cycle-invalid', 'cycle.gradePct'],
    ['a vehicle of negative mass', () => parseVehicle({ massKg: -1, rollingResistance: 0.01, dragAreaM2: 0.6 }), 'vehicle-invalid', 'vehicle.massKg'],
    ['a regeneration share above 1', () => parseVehicle({ massKg: 1, rollingResistance: 0, dragAreaM2: 0, regen: { maxFraction: 1.2 } }), 'vehicle-invalid', 'vehicle.regen.maxFraction'],
    ['unknown built-in', () => parseCycleInput({ builtin: 'nope' }), 'cycle-invalid', 'cycle.builtin'],
    ['CSV bad number', () => parseCycleCsv('timeS,speedKph\n0,0\n1,abc\n'), 'cycle-invalid', 'cycle.speedKph[1]'],
    ['CSV missing column', () => parseCycleCsv('timeS\n0\n1\n'), 'cycle-invalid', 'cycle.speedKph'],
    ['CSV unknown column', () => parseCycleCsv('timeS,speedKph,rpm\n0,0,0\n1,1,1\n'), 'cycle-invalid', 'cycle.rpm'],
    [
      'too many samples',
      () => validateCycleTrace({ timeS: Array.from({ length: 100_001 }, (_, i) => i), speedKph: new Array(100_001).fill(0) }),
      'too-large',
      'cycle.timeS',
    ],
  ];
  for (const [what, f, code, path] of cases) {
    it(`refuses ${what} with the path`, () => {
      const e = catchModelError(f);
      expect(e.code).toBe(code);
      expect(e.path).toBe(path);
      expect(e.message.length).toBeGreaterThan(10);
    });
  }
});
