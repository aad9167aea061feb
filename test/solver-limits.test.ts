/**
 * Limits, special operating points and answer content of the per-point optimum (DESIGN.md §5–§6):
 * every setting within every limit, zero torque, standstill, reverse, regeneration, battery
 * limits, friction-brake share, strict mode, infeasible reasons and wheel-torque limits, modes
 * filter, device power and power balance. Reference values are recomputed independently from the
 * maps (test/support/solverReference.ts).
 */
import { describe, it, expect } from 'vitest';
import { maxTorqueAt, minTorqueAt } from '../src/machine/map.js';
import { solvePoint, solvePoints } from '../src/solver/point.js';
import { largestFeasibleWheel, machineWheelLimit, scanDown, wheelTorqueLimits } from '../src/solver/envelope.js';
import { modeMask } from '../src/solver/modes.js';
import fc from 'fast-check';
import { describeDrivetrain, buildDrivetrain, type DrivetrainInput } from '../src/solver/drivetrain.js';
import type { ModeSetting, PointResult } from '../src/solver/types.js';
import { ModelError } from '../src/problem.js';
import { BASE_DOC, RING_SPEC, SUN_SPEC, makeDrivetrain, syntheticMap } from './support/solverFixtures.js';
import { checkSetting, refCarrierTorque, refModel, refSplitRange } from './support/solverReference.js';

const RPM = Math.PI / 30;
const dt = makeDrivetrain();
const ref = refModel(dt);
const bigBattery = makeDrivetrain({ ...BASE_DOC, battery: { maxDischargeW: 1e8, maxChargeW: 1e8 } });

function best(r: PointResult): ModeSetting {
  expect(r.feasible).toBe(true);
  return r as unknown as ModeSetting;
}

describe('every returned setting respects every limit', () => {
  it('on a grid over all four quadrants, with friction brakes allowed', () => {
    const facts = describeDrivetrain(dt);
    let feasible = 0;
    let friction = 0;
    for (let a = 0; a <= 30; a++) {
      const n = -facts.maxReverseWheelSpeedRpm * 1.02 + ((facts.maxWheelSpeedRpm + facts.maxReverseWheelSpeedRpm) * 1.04 * a) / 30;
      for (let b = 0; b <= 20; b++) {
        const t = -2400 + 240 * b;
        const r = solvePoint(dt, n, t);
        if (!r.feasible) {
          expect(r.reason).toBeDefined();
          expect(r.maxMotoringWheelNm).toBeGreaterThanOrEqual(0);
          expect(r.maxBrakingWheelNm).toBeGreaterThanOrEqual(0);
          expect(r.alternatives).toEqual([]);
          continue;
        }
        feasible++;
        const s = best(r);
        expect(checkSetting(ref, s, n)).toEqual([]);
        for (const alt of r.alternatives) expect(checkSetting(ref, alt, n)).toEqual([]);
        // The machines' torque plus the friction share make up the request.
        expect(Math.abs(s.electricWheelTorqueNm) + s.frictionBrakeNm).toBeCloseTo(Math.abs(t), 9);
        if (s.frictionBrakeNm > 0) {
          friction++;
          expect(t * n).toBeLessThan(0); // friction only when braking
          expect(Math.sign(s.electricWheelTorqueNm)).not.toBe(-Math.sign(t));
        } else {
          expect(s.electricWheelTorqueNm).toBe(t);
        }
      }
    }
    expect(feasible).toBeGreaterThan(200);
    expect(friction).toBeGreaterThan(10);
  });
});

describe('special operating points', () => {
  it('zero wheel torque: feasible, no system efficiency, battery carries only losses and loads', () => {
    for (const n of [0, 700, -200]) {
      const s = best(solvePoint(dt, n, 0));
      expect(s.electricWheelTorqueNm).toBe(0);
      expect(s.systemEfficiency).toBeNull();
      expect(s.batteryW).toBeCloseTo(s.sun.lossW + s.ring.lossW + s.meshLossW + s.finalDriveLossW + s.deviceW + s.auxiliaryW, 9);
      expect(s.meshLossW).toBe(0);
      expect(s.finalDriveLossW).toBe(0);
    }
  });

  it('standstill launch: feasible, efficiency null, no mesh or final-drive loss', () => {
    const s = best(solvePoint(dt, 0, 400));
    expect(s.systemEfficiency).toBeNull();
    expect(s.meshLossW).toBe(0);
    expect(s.finalDriveLossW).toBe(0);
    expect(s.batteryW).toBeGreaterThan(0);
    expect(checkSetting(ref, s, 0)).toEqual([]);
  });

  it('held modes at standstill use the torque relation of the starting motion (DESIGN.md §4)', () => {
    const k = ref.k;
    const e0 = ref.eta0;
    const fd = ref.i * ref.etaFd; // launch: power will flow to the wheels
    // ring held: T_r = k·η0·T_s, so T_out = (1 + k·η0)·T_s,max (brake capacity 700 N·m not reached)
    const ringHeld = wheelTorqueLimits(dt, 0, { modes: ['ring-held'] });
    expect(ringHeld.maxMotoringWheelNm).toBeCloseTo((1 + k * e0) * maxTorqueAt(dt.sun, 0) * fd, 6);
    // sun held: T_r = (k/η0)·T_s, so T_out = T_r,max·(k + η0)/k (sun brake 260 N·m not reached)
    const sunHeld = wheelTorqueLimits(dt, 0, { modes: ['sun-held'] });
    expect(sunHeld.maxMotoringWheelNm).toBeCloseTo((maxTorqueAt(dt.ring, 0) * (k + e0)) / k * fd, 6);
  });

  it('reverse driving: negative speed and torque draw power, driving machine turns backwards', () => {
    const s = best(solvePoint(dt, -250, -500));
    expect(s.batteryW).toBeGreaterThan(0);
    expect(s.systemEfficiency).toBeGreaterThan(0);
    expect(s.systemEfficiency).toBeLessThan(1);
    expect(Math.min(s.sun.speedRpm, s.ring.speedRpm)).toBeLessThan(0);
    // final drive in reverse with power to the wheels: T_out = T_wheel/(i·η) (DESIGN.md §5)
    expect(s.finalDriveLossW).toBeCloseTo(-500 * -250 * RPM * (1 / ref.etaFd - 1), 6);
    expect(checkSetting(ref, s, -250)).toEqual([]);
  });

  it('regeneration forward and in reverse: battery recovers power, efficiency = P_batt/P_wheel', () => {
    for (const [n, t] of [
      [900, -450],
      [-250, 300],
    ] as const) {
      const s = best(solvePoint(dt, n, t));
      expect(s.batteryW).toBeLessThan(0);
      expect(s.frictionBrakeNm).toBe(0);
      expect(s.systemEfficiency).toBeCloseTo(s.batteryW / (t * n * RPM), 12);
      expect(s.systemEfficiency).toBeGreaterThan(0);
      expect(s.systemEfficiency).toBeLessThan(1);
      expect(checkSetting(ref, s, n)).toEqual([]);
    }
  });
});

describe('wheel-torque limits', () => {
  /**
   * Independent dense scan of the machine-only carrier-torque limit on side σ at ω_c: each mode's
   * free variable sampled (split: 20 001 sun speeds plus the Δ = 0 ratio band; locked: sun torque).
   */
  function scanOutLimit(wc: number, sigma: number): number {
    const { sun, ring } = dt;
    const k = ref.k;
    const e0 = ref.eta0;
    const side = (map: typeof sun, w: number) => {
      const hi = maxTorqueAt(map, w);
      if (Number.isNaN(hi)) return NaN;
      return sigma > 0 ? hi : minTorqueAt(map, w);
    };
    let bestOut = 0;
    const range = refSplitRange(ref, wc);
    if (range) {
      const [lo, hi] = range;
      for (let q = 0; q <= 20000; q++) {
        const x = lo + ((hi - lo) * q) / 20000;
        const delta = x - wc;
        const c = sigma * delta > 0 ? 1 + k * e0 : 1 + k / e0;
        const a = side(sun, x);
        const b = side(ring, ((1 + k) * wc - x) / k);
        bestOut = Math.max(bestOut, Math.min(c * a, (c / (c - 1)) * b));
      }
      if (wc >= lo && wc <= hi) {
        for (let q = 0; q <= 2000; q++) {
          const c = 1 + k * e0 + ((k / e0 - k * e0) * q) / 2000;
          bestOut = Math.max(bestOut, Math.min(c * side(sun, wc), (c / (c - 1)) * side(ring, wc)));
        }
      }
    }
    return bestOut;
  }

  it('machine limit is exact: at least the dense scan, feasible at the limit, infeasible just above', () => {
    const only = { modes: ['split' as const] };
    for (const n of [0, 120, 480, 900, 1350, 1800, -150]) {
      const lim = wheelTorqueLimits(bigBattery, n, only);
      const wW = n * RPM;
      const wc = ref.i * wW;
      for (const sigma of [1, -1]) {
        const wheel = sigma > 0 ? lim.maxWheelNm : lim.minWheelNm;
        const out = refCarrierTorque(ref, wheel, wW);
        expect(Math.abs(out)).toBeGreaterThanOrEqual(scanOutLimit(wc, sigma) * (1 - 1e-9));
        expect(solvePoint(bigBattery, n, wheel * (1 - 1e-9), { ...only, strict: true }).feasible).toBe(true);
        const above = solvePoint(bigBattery, n, wheel * (1 + 1e-6), { ...only, strict: true });
        expect(above.feasible).toBe(false);
        expect(['above-motoring-limit', 'above-braking-limit']).toContain(above.reason);
      }
    }
  });

  it('battery discharge limit: reason battery-limit, limit found to 1e-6 relative by scan and bisection', () => {
    const small = makeDrivetrain({ ...BASE_DOC, battery: { maxDischargeW: 20_000, maxChargeW: 45_000 } });
    const n = 800;
    const machineOnly = wheelTorqueLimits(bigBattery, n).maxMotoringWheelNm;
    const lim = wheelTorqueLimits(small, n);
    expect(lim.maxMotoringWheelNm).toBeLessThan(machineOnly);
    const r = solvePoint(small, n, 0.95 * machineOnly);
    expect(r.feasible).toBe(false);
    expect(r.reason).toBe('battery-limit');
    expect(r.maxMotoringWheelNm).toBeCloseTo(lim.maxMotoringWheelNm, 9);
    const at = best(solvePoint(small, n, lim.maxMotoringWheelNm));
    expect(Math.abs(at.batteryW - 20_000)).toBeLessThanOrEqual(1e-5 * 20_000);
    expect(solvePoint(small, n, lim.maxMotoringWheelNm * (1 + 1e-5)).feasible).toBe(false);
    const justBelow = best(solvePoint(small, n, lim.maxMotoringWheelNm * (1 - 1e-3)));
    expect(justBelow.batteryW).toBeLessThanOrEqual(20_000);
  });

  it('battery cut at any speed, both sides: feasible at the limit, not above; root and scan agree', () => {
    const small = makeDrivetrain({ ...BASE_DOC, battery: { maxDischargeW: 12_000, maxChargeW: 6_000 } });
    const facts = describeDrivetrain(small);
    const mask = modeMask(small);
    let cut = 0;
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 100_000 }), fc.boolean(), (u, up) => {
        const n = -600 + ((facts.maxWheelSpeedRpm * 0.98 + 600) * u) / 100_000;
        const sigma = up ? 1 : -1;
        const wW = n * RPM;
        const machine = machineWheelLimit(small, mask, wW, sigma);
        const got = largestFeasibleWheel(small, mask, wW, sigma, machine);
        expect(got).toBeGreaterThanOrEqual(0);
        expect(solvePoint(small, n, sigma * got, { strict: true }).feasible).toBe(true);
        if (got < machine) {
          cut++;
          const above = solvePoint(small, n, sigma * got * (1 + 1e-5), { strict: true });
          expect(above.feasible).toBe(false);
          expect(above.reason).toBe('battery-limit');
          // The documented fallback (scan of 32 steps + bisection to 1e-6) finds the same cut.
          expect(Math.abs(scanDown(small, mask, wW, sigma, machine) - got)).toBeLessThanOrEqual(2e-6 * got);
        }
      }),
      { numRuns: 100, seed: 11 },
    );
    expect(cut).toBeGreaterThan(20);
  });

  it('above the motoring limit: reason and limits; above max speed: no mode turns', () => {
    const facts = describeDrivetrain(dt);
    const r = solvePoint(dt, 1500, 3000);
    expect(r.feasible).toBe(false);
    expect(r.reason).toBe('above-motoring-limit');
    const lim = wheelTorqueLimits(dt, 1500);
    expect(r.maxMotoringWheelNm).toBeCloseTo(lim.maxMotoringWheelNm, 9);
    expect(r.maxBrakingWheelNm).toBeCloseTo(lim.maxBrakingWheelNm, 9);
    const fast = solvePoint(dt, facts.maxWheelSpeedRpm * 1.01, 10);
    expect(fast.reason).toBe('above-max-speed');
    expect(fast.maxMotoringWheelNm).toBe(0);
    expect(best(solvePoint(dt, facts.maxWheelSpeedRpm * 0.99, 0)).mode).toBe('split');
    // The top wheel speed of split mode: (1 + k)·ω_c = S_s + k·S_r (Willis with both at their limits).
    const top = (dt.sun.maxSpeedRadS + ref.k * dt.ring.maxSpeedRadS) / (1 + ref.k) / ref.i / RPM;
    expect(facts.maxWheelSpeedRpm).toBeCloseTo(top, 9);
  });
});

describe('braking beyond the machines or the battery', () => {
  it('charge limit: machines brake as hard as the limit allows, friction brakes take the rest', () => {
    const n = 1500;
    const t = -6000;
    const s = best(solvePoint(dt, n, t));
    expect(s.frictionBrakeNm).toBeGreaterThan(0);
    expect(-s.electricWheelTorqueNm + s.frictionBrakeNm).toBeCloseTo(6000, 9);
    expect(s.binding).toContain('battery-charge');
    expect(s.batteryW).toBeGreaterThanOrEqual(-45_000 * (1 + 1e-9));
    expect(Math.abs(s.batteryW + 45_000)).toBeLessThanOrEqual(1e-4 * 45_000);
    expect(-s.electricWheelTorqueNm).toBeCloseTo(wheelTorqueLimits(dt, n).maxBrakingWheelNm, 6);
    // The most electric braking: slightly more is not possible within the limits.
    expect(solvePoint(dt, n, s.electricWheelTorqueNm * (1 + 1e-5), { strict: true }).feasible).toBe(false);
    expect(checkSetting(ref, s, n)).toEqual([]);
    // Strict: infeasible, with the reason and the limits.
    const strict = solvePoint(dt, n, t, { strict: true });
    expect(strict.feasible).toBe(false);
    expect(['battery-limit', 'above-braking-limit']).toContain(strict.reason);
    expect(strict.maxBrakingWheelNm).toBeCloseTo(-s.electricWheelTorqueNm, 6);
  });

  it('machine limit: friction takes what the machines cannot, binding names a machine limit', () => {
    const n = 600;
    const lim = wheelTorqueLimits(bigBattery, n).maxBrakingWheelNm;
    const s = best(solvePoint(bigBattery, n, -(lim + 500)));
    expect(s.frictionBrakeNm).toBeCloseTo(500, 6);
    expect(s.electricWheelTorqueNm).toBeCloseTo(-lim, 6);
    expect(s.binding.some((b) => /^(sun|ring)-|capacity/.test(b))).toBe(true);
    const strict = solvePoint(bigBattery, n, -(lim + 500), { strict: true });
    expect(strict.reason).toBe('above-braking-limit');
    expect(strict.maxBrakingWheelNm).toBeCloseTo(lim, 6);
  });

  it('reverse braking (positive torque while rolling backwards) also uses friction brakes', () => {
    const s = best(solvePoint(dt, -300, 5000));
    expect(s.frictionBrakeNm).toBeGreaterThan(0);
    expect(s.electricWheelTorqueNm).toBeGreaterThan(0);
    expect(s.electricWheelTorqueNm + s.frictionBrakeNm).toBeCloseTo(5000, 9);
  });
});

describe('modes, devices and the answer', () => {
  it('modes filter: only the requested modes appear; unavailable modes give no-mode-available', () => {
    const r = solvePoint(dt, 600, 300, { modes: ['sun-held', 'locked'] });
    const s = best(r);
    expect(['sun-held', 'locked']).toContain(s.mode);
    for (const a of r.alternatives) expect(['sun-held', 'locked']).toContain(a.mode);
    const bare = makeDrivetrain({ ...BASE_DOC, devices: undefined });
    const none = solvePoint(bare, 600, 300, { modes: ['locked'] });
    expect(none.feasible).toBe(false);
    expect(none.reason).toBe('no-mode-available');
    expect(describeDrivetrain(bare).availableModes).toEqual(['split']);
  });

  it('device power: each fitted device draws engagedW in its mode and releasedW otherwise', () => {
    const r = solvePoint(dt, 400, 200);
    const all = [best(r), ...r.alternatives];
    expect(all.length).toBe(4);
    // BASE_DOC: ring brake 0/12 W, sun brake 25/0 W, clutch 30/0 W (engaged/released).
    const want: Record<string, number> = { split: 12, 'ring-held': 0, 'sun-held': 12 + 25, locked: 12 + 30 };
    for (const s of all) expect(s.deviceW).toBe(want[s.mode]);
  });

  it('alternatives are the other feasible modes, best first; binding lists active limits', () => {
    const r = solvePoint(dt, 400, 200);
    const p = [r.batteryW!, ...r.alternatives.map((a) => a.batteryW)];
    for (let i = 1; i < p.length; i++) expect(p[i]).toBeGreaterThanOrEqual(p[i - 1]!);
    const lim = wheelTorqueLimits(bigBattery, 300);
    const edge = best(solvePoint(bigBattery, 300, lim.maxWheelNm));
    expect(edge.binding.length).toBeGreaterThan(0);
  });

  it('power balance closes to 1e-9 relative: P_batt = P_wheel + mesh + final drive + machine losses + devices + aux', () => {
    const pts = [];
    for (let n = -300; n <= 1900; n += 110) for (let t = -1800; t <= 1800; t += 300) pts.push({ wheelSpeedRpm: n, wheelTorqueNm: t });
    let checked = 0;
    for (const r of solvePoints(dt, pts)) {
      if (!r.feasible) continue;
      for (const s of [best(r), ...r.alternatives]) {
        const pw = s.electricWheelTorqueNm * r.wheelSpeedRpm * RPM;
        const rhs = pw + s.meshLossW + s.finalDriveLossW + s.sun.lossW + s.ring.lossW + s.deviceW + s.auxiliaryW;
        const scale = Math.abs(pw) + Math.abs(s.sun.electricalW) + Math.abs(s.ring.electricalW) + s.deviceW + s.auxiliaryW;
        expect(Math.abs(s.batteryW - rhs)).toBeLessThanOrEqual(1e-9 * scale);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(300);
  });
});

describe('drivetrain document', () => {
  const maps = new Map([
    ['syn-sun', syntheticMap(SUN_SPEC)],
    ['syn-ring', syntheticMap(RING_SPEC)],
  ]);
  const build = (doc: unknown) => buildDrivetrain('x', doc, (n) => maps.get(n));
  const code = (f: () => unknown): [string, string | undefined] => {
    try {
      f();
    } catch (e) {
      expect(e).toBeInstanceOf(ModelError);
      return [(e as ModelError).code, (e as ModelError).path];
    }
    return ['accepted', undefined];
  };

  it('refuses unknown machines, bad geometry and bad fields with their paths', () => {
    expect(code(() => build({ ...BASE_DOC, ringMachine: 'nope' }))).toEqual(['unknown-machine', 'ringMachine']);
    expect(code(() => build({ ...BASE_DOC, gearset: { ...BASE_DOC.gearset, ringTeeth: 79 } }))).toEqual(['gearset-invalid', 'gearset.ringTeeth']);
    expect(code(() => build({ ...BASE_DOC, finalDrive: { ratio: -1, efficiency: 0.9 } }))).toEqual(['drivetrain-invalid', 'finalDrive.ratio']);
    expect(code(() => build({ ...BASE_DOC, extra: 1 }))[0]).toBe('drivetrain-invalid');
    const input: DrivetrainInput = { ...BASE_DOC };
    delete input.auxiliaryW;
    expect(build(input).auxW).toBe(0);
  });
});
