import { describe, it, expect } from 'vitest';
import { bestModeSequence } from '../src/vehicle/modeSequence.js';
import { boundFromRun } from '../src/vehicle/bound.js';
import { runCycle } from '../src/vehicle/cycleEnergy.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { testDrivetrain, testVehicle } from './support/syntheticDrivetrain.js';

/** Brute force: every mode sequence, Σ energy + cost·switches (reference for the recursion). */
function bruteForce(e: number[][], c: number): number {
  const steps = e.length;
  const modes = e[0]!.length;
  let best = Number.POSITIVE_INFINITY;
  const seq = new Array<number>(steps).fill(0);
  const total = modes ** steps;
  for (let code = 0; code < total; code++) {
    let x = code;
    for (let k = 0; k < steps; k++) {
      seq[k] = x % modes;
      x = Math.floor(x / modes);
    }
    let cost = 0;
    for (let k = 0; k < steps; k++) cost += e[k]![seq[k]!]! + (k > 0 && seq[k] !== seq[k - 1] ? c : 0);
    best = Math.min(best, cost);
  }
  return best;
}

describe('least-energy mode sequence with switch costs (Bellman recursion)', () => {
  it('solves a 3-step, 2-mode example worked by hand', () => {
    // Step energies (Wh), modes A and B:   A    B
    //   step 0                              1    2
    //   step 1                              3    1
    //   step 2                              1    2.5
    // Sequences: AAA = 5, BBB = 5.5, ABA = 3 + 2c, ABB = 4.5 + c, BBA = 4 + c, AAB = 6.5 + c, BAB, BAA worse.
    // c = 0:   best ABA = 3 (two switches).  c = 0.4: ABA = 3.8 < BBA = 4.4.
    // c = 1.5: ABA = 6, BBA = 5.5, AAA = 5 → AAA = 5 with no switch.
    const e = Float64Array.from([1, 2, 3, 1, 1, 2.5]);
    const s0 = bestModeSequence(e, 3, 2, 0);
    expect(s0.totalWh).toBe(3);
    expect(Array.from(s0.modes)).toEqual([0, 1, 0]);
    expect(s0.switches).toBe(2);
    const s04 = bestModeSequence(e, 3, 2, 0.4);
    expect(s04.totalWh).toBeCloseTo(3.8, 12);
    expect(Array.from(s04.modes)).toEqual([0, 1, 0]);
    const s15 = bestModeSequence(e, 3, 2, 1.5);
    expect(s15.totalWh).toBe(5);
    expect(Array.from(s15.modes)).toEqual([0, 0, 0]);
    expect(s15.switches).toBe(0);
    expect(s15.energyWh).toBe(5);
  });

  it('matches a brute-force search over every sequence', () => {
    // Deterministic pseudo-random tables (linear congruential generator), some modes unavailable.
    let seed = 12345;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (let trial = 0; trial < 30; trial++) {
      const steps = 2 + (trial % 5);
      const modes = 2 + (trial % 3);
      const e: number[][] = [];
      for (let k = 0; k < steps; k++) {
        const row = Array.from({ length: modes }, () => (rnd() < 0.15 ? Number.POSITIVE_INFINITY : rnd() * 10 - 3));
        if (row.every((x) => !Number.isFinite(x))) row[0] = 1;
        e.push(row);
      }
      const c = rnd() * 4;
      const dp = bestModeSequence(Float64Array.from(e.flat()), steps, modes, c);
      expect(dp.totalWh).toBeCloseTo(bruteForce(e, c), 9);
      expect(dp.totalWh).toBeCloseTo(dp.energyWh + c * dp.switches, 9);
    }
  });
});

describe('cycle-optimal bound', () => {
  const dt = testDrivetrain();
  const car = testVehicle({ auxiliaryW: 300 });
  const run = runCycle(dt, car, getBuiltinCycle('nedc'), { modeEnergies: true, series: true });

  it('equals the step-by-step optimum when switches cost nothing', () => {
    const b = boundFromRun(run, 0);
    expect(b.stepwiseEnergyWh).toBeCloseTo(run.batteryWh, 9);
    expect(b.boundWh).toBeCloseTo(b.stepwiseWh, 9);
    expect(b.gapWh).toBeLessThan(1e-9);
    expect(run.modeSwitches).toBeGreaterThan(0);
  });

  it('is never above the step-by-step optimum and switches less as switching gets dearer', () => {
    let lastSwitches = Number.POSITIVE_INFINITY;
    for (const c of [0, 0.001, 0.01, 0.05, 0.2, 1, 5]) {
      const b = boundFromRun(run, c);
      expect(b.boundWh).toBeLessThanOrEqual(b.stepwiseWh + 1e-9);
      expect(b.stepwiseWh).toBeCloseTo(run.batteryWh + c * run.modeSwitches, 9);
      expect(b.boundSwitches).toBeLessThanOrEqual(lastSwitches);
      lastSwitches = b.boundSwitches;
    }
    const dear = boundFromRun(run, 5);
    expect(dear.boundSwitches).toBeLessThan(run.modeSwitches);
    expect(dear.gapWh).toBeGreaterThan(0);
    // With switching this dear the bound keeps one mode all cycle long: it is the cheapest
    // single-mode run, which a run restricted to that mode reproduces.
    expect(dear.boundSwitches).toBe(0);
    const only = Object.keys(dear.boundModeTimeS) as ('split' | 'ring-held' | 'sun-held' | 'locked')[];
    expect(only.length).toBe(1);
    const single = runCycle(dt, car, getBuiltinCycle('nedc'), { modes: only });
    expect(dear.boundWh).toBeCloseTo(single.batteryWh, 6);
  });
});
