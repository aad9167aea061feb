/**
 * The per-point optimum against a dense brute-force scan of each mode's free variable
 * (DESIGN.md §6: the answer must be the global optimum of the interpolated model). Maps are
 * synthetic (invented) with non-convex loss surfaces and envelopes with corners.
 */
import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { MODES, type Mode, type ModeSetting, type PointResult } from '../src/solver/types.js';
import { solvePoint } from '../src/solver/point.js';
import { wheelTorqueLimits } from '../src/solver/envelope.js';
import { describeDrivetrain, type Drivetrain, type DrivetrainInput } from '../src/solver/drivetrain.js';
import { BASE_DOC, RING_SPEC, SUN_SPEC, makeDrivetrain, syntheticMap } from './support/solverFixtures.js';
import { checkSetting, refCarrierTorque, refModel, scanMode } from './support/solverReference.js';

const RPM = Math.PI / 30;

function setting(r: PointResult): ModeSetting {
  return r as unknown as ModeSetting;
}

function drivetrains(): { label: string; dt: Drivetrain }[] {
  const base = makeDrivetrain();
  // Sun may not reverse, other ratio and η0, tight battery, no clutch.
  const docB: DrivetrainInput = {
    ...BASE_DOC,
    gearset: { sunTeeth: 24, ringTeeth: 72, planets: 4, baseEfficiency: 0.96 },
    finalDrive: { ratio: 3.6, efficiency: 0.975 },
    devices: { ringBrake: { engagedW: 5, releasedW: 0 }, sunBrake: { engagedW: 0, releasedW: 18, maxTorqueNm: 150 } },
    battery: { maxDischargeW: 30_000, maxChargeW: 15_000 },
  };
  const b = makeDrivetrain(docB, [syntheticMap({ ...SUN_SPEC, reverse: false }), syntheticMap(RING_SPEC)]);
  // Ring may not reverse, rough loss surfaces, small clutch, large auxiliary load.
  const docC: DrivetrainInput = {
    ...BASE_DOC,
    gearset: { sunTeeth: 36, ringTeeth: 84, planets: 5, baseEfficiency: 0.985 },
    devices: { lockClutch: { engagedW: 40, releasedW: 3, maxTorqueNm: 40 }, ringBrake: { engagedW: 0, releasedW: 10, maxTorqueNm: 300 } },
    battery: { maxDischargeW: 60_000, maxChargeW: 20_000 },
    auxiliaryW: 1500,
  };
  const c = makeDrivetrain(docC, [
    syntheticMap({ ...SUN_SPEC, bumpW: 900, c3: 0.01 }),
    syntheticMap({
      ...RING_SPEC,
      reverse: false,
      loss: (w, t) => 300 + 0.6 * w + 0.025 * t * t + 700 * Math.abs(Math.sin(w / 60) * Math.cos(t / 35)),
    }),
  ]);
  return [
    { label: 'all devices', dt: base },
    { label: 'sun without reverse, tight battery', dt: b },
    { label: 'ring without reverse, rough losses', dt: c },
  ];
}

function checkPoint(dt: Drivetrain, n: number, t: number): void {
  const r = refModel(dt);
  const wW = n * RPM;
  const wc = r.i * wW;
  const tout = refCarrierTorque(r, t, wW);
  const perMode: { mode: Mode; p: number }[] = [];
  for (const mode of MODES) {
    if (!r.available[mode]) continue;
    const scan = scanMode(r, mode, wc, tout);
    const res = solvePoint(dt, n, t, { modes: [mode], strict: true });
    if (scan.best < Infinity) {
      // A sample inside every limit exists, so the solver must find a setting at least as good.
      expect(res.feasible, `${mode} at (${n} rpm, ${t} N·m): scan found ${scan.best} W`).toBe(true);
      expect(res.batteryW!).toBeLessThanOrEqual(scan.best + 1e-6 * Math.abs(scan.best) + 1e-6);
    }
    if (res.feasible) {
      expect(res.mode).toBe(mode);
      expect(checkSetting(r, setting(res), n)).toEqual([]);
      perMode.push({ mode, p: res.batteryW! });
    }
  }
  // All modes together: the best of the per-mode optima, the others listed best first.
  const all = solvePoint(dt, n, t, { strict: true });
  expect(all.feasible).toBe(perMode.length > 0);
  if (all.feasible) {
    const bestP = Math.min(...perMode.map((m) => m.p));
    expect(all.batteryW!).toBeCloseTo(bestP, 6);
    expect(all.alternatives.length).toBe(perMode.length - 1);
    let prev = all.batteryW!;
    for (const alt of all.alternatives) {
      expect(alt.batteryW).toBeGreaterThanOrEqual(prev - 1e-9);
      prev = alt.batteryW;
      expect(checkSetting(r, alt, n)).toEqual([]);
    }
  }
}

describe('solver against a dense brute-force scan (>= 20 000 samples per free variable)', () => {
  for (const { label, dt } of drivetrains()) {
    it(`never worse than the scan and always within limits: ${label}`, () => {
      const facts = describeDrivetrain(dt);
      const nMax = facts.maxWheelSpeedRpm * 1.03;
      const nRev = Math.max(facts.maxReverseWheelSpeedRpm * 1.03, 30);
      const tMax = Math.max(facts.standstillMaxWheelNm, 200) * 1.1;
      // Uniform over the range (integers mapped linearly), plus exact zeros.
      const uniform = (lo: number, hi: number) => fc.integer({ min: 0, max: 1_000_000 }).map((u) => lo + ((hi - lo) * u) / 1_000_000);
      const speed = fc.oneof({ weight: 8, arbitrary: uniform(-nRev, nMax) }, { weight: 1, arbitrary: fc.constant(0) });
      const torque = fc.oneof({ weight: 8, arbitrary: uniform(-tMax, tMax) }, { weight: 1, arbitrary: fc.constant(0) });
      fc.assert(
        fc.property(speed, torque, (n, t) => {
          checkPoint(dt, n, t);
        }),
        { numRuns: 300, seed: 20240611 },
      );
    });

    it(`never worse than the scan close to the limits, where constraints cut pieces: ${label}`, () => {
      const facts = describeDrivetrain(dt);
      fc.assert(
        fc.property(
          fc.integer({ min: 0, max: 1_000_000 }),
          fc.integer({ min: 0, max: 1_000_000 }),
          fc.boolean(),
          (u, v, positive) => {
            const n = -facts.maxReverseWheelSpeedRpm + ((facts.maxWheelSpeedRpm + facts.maxReverseWheelSpeedRpm) * u) / 1_000_000;
            const share = 0.9 + (0.1 * v) / 1_000_000;
            const lim = wheelTorqueLimits(dt, n);
            const t = positive ? share * lim.maxWheelNm : share * lim.minWheelNm;
            checkPoint(dt, n, t);
          },
        ),
        { numRuns: 120, seed: 7 },
      );
    });
  }

  it('finds the optimum at Δ = 0 inside the friction band, where no regime formula alone does', () => {
    const dt = makeDrivetrain();
    const r = refModel(dt);
    // Sweep moderate points; wherever the scan's best lies on the band, the solver must match it.
    let bandCases = 0;
    for (let n = 50; n <= 1500; n += 145) {
      for (let t = -900; t <= 900; t += 150) {
        const wW = n * RPM;
        const wc = r.i * wW;
        const tout = refCarrierTorque(r, t, wW);
        const res = solvePoint(dt, n, t, { modes: ['split'], strict: true });
        const scan = scanMode(r, 'split', wc, tout);
        if (!res.feasible) continue;
        expect(res.batteryW!).toBeLessThanOrEqual(scan.best + 1e-6 * Math.abs(scan.best) + 1e-6);
        if (Math.abs(res.sun!.speedRpm * RPM - wc) < 1e-9 * (1 + wc)) bandCases++;
      }
    }
    expect(bandCases).toBeGreaterThan(0);
  });
});
