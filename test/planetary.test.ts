/**
 * Planetary gear set: Willis kinematics, power-flow torque split and mesh loss, held-mode
 * ratios and efficiencies, tooth-count rules, final drive.
 */
import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import {
  carrierSpeed,
  heldDivisor,
  meshLoss,
  ringHeldEfficiency,
  ringHeldRatio,
  ringSpeed,
  sunHeldEfficiency,
  sunHeldRatio,
  sunSpeed,
  sunTorque,
  sunTorqueBand,
} from '../src/gearset/planetary.js';
import { checkGeometry } from '../src/gearset/geometry.js';
import { carrierFromWheelTorque, finalDriveLoss, wheelFromCarrierTorque } from '../src/gearset/finalDrive.js';
import { ModelError } from '../src/problem.js';

/** Efficiency of a held mode from the general torque split: output power / input power. */
function heldEfficiencyFromSplit(k: number, eta0: number, ringHeld: boolean, wc: number, tout: number): number {
  const ws = ringHeld ? (1 + k) * wc : 0;
  const wr = ringSpeed(k, ws, wc);
  const ts = sunTorque(k, eta0, tout, ws - wc);
  const tr = tout - ts;
  const pMachine = ts * ws + tr * wr; // power into the set from the driving member
  const pCarrier = tout * wc;
  return pCarrier * pMachine > 0 && Math.abs(pCarrier) < Math.abs(pMachine) ? pCarrier / pMachine : pMachine / pCarrier;
}

describe('Willis kinematics', () => {
  // Willis equation (Müller, Epicyclic Drive Trains, 1982).
  it('ω_s + k·ω_r = (1 + k)·ω_c for every pair of speeds (Willis equation)', () => {
    fc.assert(
      fc.property(fc.double({ min: 1.2, max: 6, noNaN: true }), fc.double({ min: -1000, max: 1000, noNaN: true }), fc.double({ min: -1000, max: 1000, noNaN: true }), (k, ws, wc) => {
        const wr = ringSpeed(k, ws, wc);
        expect(ws + k * wr).toBeCloseTo((1 + k) * wc, 8);
        expect(sunSpeed(k, wr, wc)).toBeCloseTo(ws, 8);
        expect(carrierSpeed(k, ws, wr)).toBeCloseTo(wc, 8);
      }),
    );
  });

  it('ring held: ω_s/ω_c = 1 + k; sun held: ω_r/ω_c = (1 + k)/k (Shigley, gear-train chapter)', () => {
    const k = 78 / 30;
    expect(ringHeldRatio(k)).toBeCloseTo(1 + k, 12);
    expect(sunHeldRatio(k)).toBeCloseTo((1 + k) / k, 12);
    // ring at rest when the sun turns at (1 + k)·ω_c; sun at rest when the ring turns at (1 + k)/k·ω_c
    expect(ringSpeed(k, ringHeldRatio(k) * 10, 10)).toBeCloseTo(0, 12);
    expect(sunSpeed(k, sunHeldRatio(k) * 10, 10)).toBeCloseTo(0, 12);
  });
});

describe('held-mode efficiency from the power-flow split (Müller, Epicyclic Drive Trains, 1982)', () => {
  const k = 2.6;
  const eta0 = 0.975;
  // Closed forms as published (Müller 1982): ring held motoring (1 + k·η0)/(1 + k), braking
  // η0·(1 + k)/(k + η0); sun held motoring (k + η0)/(1 + k), braking η0·(1 + k)/(1 + k·η0).
  const ringMot = (1 + k * eta0) / (1 + k);
  const ringBrk = (eta0 * (1 + k)) / (k + eta0);
  const sunMot = (k + eta0) / (1 + k);
  const sunBrk = (eta0 * (1 + k)) / (1 + k * eta0);

  it('closed forms', () => {
    expect(ringHeldEfficiency(k, eta0, true)).toBeCloseTo(ringMot, 12);
    expect(ringHeldEfficiency(k, eta0, false)).toBeCloseTo(ringBrk, 12);
    expect(sunHeldEfficiency(k, eta0, true)).toBeCloseTo(sunMot, 12);
    expect(sunHeldEfficiency(k, eta0, false)).toBeCloseTo(sunBrk, 12);
  });

  for (const dir of [1, -1]) {
    const label = dir > 0 ? 'forward' : 'reverse';
    it(`ring held, ${label}: motoring and braking`, () => {
      const wc = 120 * dir;
      expect(heldEfficiencyFromSplit(k, eta0, true, wc, 300 * dir)).toBeCloseTo(ringMot, 12);
      expect(heldEfficiencyFromSplit(k, eta0, true, wc, -300 * dir)).toBeCloseTo(ringBrk, 12);
    });
    it(`sun held, ${label}: motoring and braking`, () => {
      const wc = 80 * dir;
      expect(heldEfficiencyFromSplit(k, eta0, false, wc, 500 * dir)).toBeCloseTo(sunMot, 12);
      expect(heldEfficiencyFromSplit(k, eta0, false, wc, -500 * dir)).toBeCloseTo(sunBrk, 12);
    });
  }

  it('held modes at standstill use the relation of the motion about to start (DESIGN.md §4)', () => {
    // ring held: T_r = k·η0·T_s; sun held: T_r = (k/η0)·T_s — launch torque is not overstated.
    expect(heldDivisor(k, eta0, true, 100, 0)).toBeCloseTo(1 + k * eta0, 12);
    expect(heldDivisor(k, eta0, true, -100, 0)).toBeCloseTo(1 + k * eta0, 12);
    expect(heldDivisor(k, eta0, false, 100, 0)).toBeCloseTo(1 + k / eta0, 12);
    expect(heldDivisor(k, eta0, false, -100, 0)).toBeCloseTo(1 + k / eta0, 12);
  });
});

describe('torque split and mesh loss', () => {
  it('power balance T_s·ω_s + T_r·ω_r − T_out·ω_c = mesh loss in every regime (Müller 1982)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 1.2, max: 6, noNaN: true }),
        fc.double({ min: 0.9, max: 1, noNaN: true }),
        fc.double({ min: -800, max: 800, noNaN: true }),
        fc.double({ min: -1500, max: 1500, noNaN: true }),
        fc.double({ min: -2000, max: 2000, noNaN: true }),
        (k, eta0, wc, ws, tout) => {
          const delta = ws - wc;
          if (delta === 0) return;
          const wr = ringSpeed(k, ws, wc);
          const ts = sunTorque(k, eta0, tout, delta);
          const tr = tout - ts;
          const mesh = meshLoss(eta0, ts, tout, delta);
          expect(mesh).toBeGreaterThanOrEqual(0);
          const residual = ts * ws + tr * wr - tout * wc - mesh;
          expect(Math.abs(residual)).toBeLessThanOrEqual(1e-9 * (Math.abs(ts * ws) + Math.abs(tr * wr) + Math.abs(tout * wc) + 1));
        },
      ),
      { numRuns: 500 },
    );
  });

  // Willis equation and the lossless torque ratio (Müller, Epicyclic Drive Trains, 1982).
  it('lossless set: T_r = k·T_s and no mesh loss (Willis, η0 = 1)', () => {
    const k = 3;
    const ts = sunTorque(k, 1, 400, 25);
    expect(ts).toBeCloseTo(100, 12);
    expect(meshLoss(1, ts, 400, 25)).toBe(0);
  });

  // Static friction at Δ = 0 allows any ratio between k·η0 and k/η0 (DESIGN.md §4; common practice).
  it('Δ = 0: the sun torque band spans T_r/T_s from k·η0 to k/η0 and there is no mesh loss', () => {
    const k = 2.6;
    const eta0 = 0.97;
    const band = [0, 0];
    for (const tout of [500, -500]) {
      sunTorqueBand(k, eta0, tout, band);
      const ratios = band.map((ts) => (tout - ts) / ts).sort((a, b) => a - b);
      expect(ratios[0]).toBeCloseTo(k * eta0, 12);
      expect(ratios[1]).toBeCloseTo(k / eta0, 12);
      expect(band[0]).toBeLessThanOrEqual(band[1]!);
    }
    expect(meshLoss(eta0, 100, 500, 0)).toBe(0);
  });
});

// Rules as given in planetary gear design texts (Müller, Epicyclic Drive Trains, 1982, from memory):
// planet teeth (Zr − Zs)/2 whole, assembly (Zs + Zr)/N whole, adjacency (Zs + Zp)·sin(π/N) > Zp + 2.
describe('tooth-count rules (planet teeth, assembly, adjacency)', () => {
  function refused(zs: number, zr: number, n: number): ModelError {
    try {
      checkGeometry(zs, zr, n);
    } catch (e) {
      expect(e).toBeInstanceOf(ModelError);
      expect((e as ModelError).code).toBe('gearset-invalid');
      return e as ModelError;
    }
    throw new Error(`Zs=${zs}, Zr=${zr}, N=${n} was accepted`);
  }

  it('accepts workable sets and derives k and the planet teeth', () => {
    const g = checkGeometry(30, 78, 3);
    expect(g.planetTeeth).toBe(24);
    expect(g.k).toBeCloseTo(2.6, 12);
    // Zs = 21, Zr = 63, N = 4: Zp = 21, (21 + 63)/4 = 21 whole, (21 + 21)·sin 45° = 29.7 > 23.
    expect(checkGeometry(21, 63, 4).planetTeeth).toBe(21);
  });

  it('refuses an odd tooth difference (planet teeth not whole): Zs = 20, Zr = 61', () => {
    expect(refused(20, 61, 3).path).toBe('gearset.ringTeeth');
  });

  it('refuses sets that cannot be assembled: (Zs + Zr)/N not whole', () => {
    expect(refused(20, 62, 4).path).toBe('gearset.planets'); // 82/4
    expect(refused(21, 63, 5).path).toBe('gearset.planets'); // 84/5
  });

  it('refuses too many planets (adjacency): Zs = 18, Zr = 54, N = 6 and N = 8', () => {
    // Zp = 18: (18 + 18)·sin 30° = 18 is not above 20; assembly holds (72/6, 72/8 whole).
    expect(refused(18, 54, 6).message).toMatch(/adjacency/);
    expect(refused(18, 54, 8).message).toMatch(/adjacency/);
    expect(checkGeometry(18, 54, 4).planets).toBe(4); // 36·sin 45° = 25.5 > 20
  });

  it('refuses a ring smaller than the sun and fractional tooth counts', () => {
    expect(refused(60, 30, 3).path).toBe('gearset.ringTeeth');
    expect(refused(20.5, 62, 3).path).toBe('gearset.sunTeeth');
  });
});

describe('final drive (efficiency in the direction of power flow, common practice)', () => {
  it('T_out = T_wheel/(i·η) when driving, T_wheel·η/i when braking, forward and reverse; loss >= 0', () => {
    const i = 4;
    const eta = 0.96;
    expect(carrierFromWheelTorque(i, eta, 960, 10)).toBeCloseTo(250, 12);
    expect(carrierFromWheelTorque(i, eta, -960, -10)).toBeCloseTo(-250, 12);
    expect(carrierFromWheelTorque(i, eta, -1000, 10)).toBeCloseTo(-240, 12);
    expect(carrierFromWheelTorque(i, eta, 1000, -10)).toBeCloseTo(240, 12);
    expect(carrierFromWheelTorque(i, eta, 960, 0)).toBeCloseTo(250, 12);
    for (const [t, w] of [
      [960, 10],
      [-960, 10],
      [960, -10],
      [-960, -10],
    ] as const) {
      const loss = finalDriveLoss(i, eta, t, w);
      expect(loss).toBeGreaterThanOrEqual(0);
      // driving: loss = P_wheel·(1/η − 1); braking: |P_wheel|·(1 − η) (DESIGN.md §2)
      const pw = t * w;
      expect(loss).toBeCloseTo(pw > 0 ? pw * (1 / eta - 1) : -pw * (1 - eta), 9);
      const tout = carrierFromWheelTorque(i, eta, t, w);
      expect(wheelFromCarrierTorque(i, eta, tout, i * w)).toBeCloseTo(t, 9);
    }
  });
});
