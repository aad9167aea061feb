/**
 * The split mode's best-first search with bounds (src/solver/splitWalk.ts) must give exactly the
 * answer of the plain left-to-right walk over every piece: same mode, same numbers to the last
 * bit, on the demo drivetrain and on synthetic ones (non-convex losses, no reverse, tight
 * battery), for every option set, motoring and braking, beyond the limits included (where the
 * battery-cut search maximises battery power, the bound's other sense). Global optimality itself
 * is checked against dense scans in solver-bruteforce.test.ts.
 */
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { Registry } from '../src/store/registry.js';
import { describeDrivetrain, type Drivetrain, type DrivetrainInput } from '../src/solver/drivetrain.js';
import { solvePoint } from '../src/solver/point.js';
import { SPLIT_SEARCH } from '../src/solver/splitWalk.js';
import type { SolveOptions } from '../src/solver/types.js';
import { lossInCell, lossInColumns } from '../src/machine/map.js';
import { BASE_DOC, RING_SPEC, SUN_SPEC, makeDrivetrain, syntheticMap } from './support/solverFixtures.js';

const MAPS = path.resolve(import.meta.dirname, '../maps');

async function demo(): Promise<Drivetrain> {
  const registry = new Registry({ mapsDir: MAPS, dataDir: mkdtempSync(path.join(tmpdir(), 'episplit-split-')) });
  await registry.load();
  return registry.getDrivetrain('van-axle')!;
}

function synthetic(): Drivetrain[] {
  const noSunReverse: DrivetrainInput = { ...BASE_DOC, battery: { maxDischargeW: 30_000, maxChargeW: 12_000 } };
  return [
    makeDrivetrain(),
    makeDrivetrain(noSunReverse, [syntheticMap({ ...SUN_SPEC, reverse: false }), syntheticMap(RING_SPEC)]),
    makeDrivetrain({ ...BASE_DOC, devices: {} }, [
      syntheticMap({ ...SUN_SPEC, bumpW: 900, c3: 0.01 }),
      syntheticMap({ ...RING_SPEC, reverse: false, loss: (w, t) => 300 + 0.6 * w + 0.025 * t * t + 700 * Math.abs(Math.sin(w / 60) * Math.cos(t / 35)) }),
    ]),
  ];
}

const OPTION_SETS: SolveOptions[] = [{}, { strict: true }, { modes: ['split'] }, { alternatives: false }, { modes: ['split', 'locked'] }];

function both(dt: Drivetrain, n: number, t: number, opts: SolveOptions): { pruned: string; plain: string; evPruned: number; evPlain: number } {
  SPLIT_SEARCH.evaluations = 0;
  const pruned = JSON.stringify(solvePoint(dt, n, t, opts));
  const evPruned = SPLIT_SEARCH.evaluations;
  SPLIT_SEARCH.prune = false;
  SPLIT_SEARCH.evaluations = 0;
  try {
    const plain = JSON.stringify(solvePoint(dt, n, t, opts));
    return { pruned, plain, evPruned, evPlain: SPLIT_SEARCH.evaluations };
  } finally {
    SPLIT_SEARCH.prune = true;
  }
}

describe('split search with bounds', () => {
  it('reads the same loss surface from the torque-major copy', async () => {
    const dt = await demo();
    for (const map of [dt.sun, dt.ring]) {
      for (let i = 0; i < map.nSpeed - 1; i += 3) {
        for (let j = 0; j < map.nTorque - 1; j += 2) {
          for (const [u, v] of [[0, 0], [0.3, 0.8], [1, 1], [0.5, 0]] as const) {
            expect(lossInColumns(map, i, u, j, v)).toBe(lossInCell(map, i, u, j, v));
          }
        }
      }
    }
  });

  it('answers bit for bit as the plain walk, and evaluates fewer piece ends', async () => {
    const dts = [await demo(), ...synthetic()];
    let evPruned = 0;
    let evPlain = 0;
    let checked = 0;
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: dts.length - 1 }),
        fc.double({ min: -0.4, max: 1.2, noNaN: true }),
        fc.double({ min: -1.3, max: 1.3, noNaN: true }),
        fc.integer({ min: 0, max: OPTION_SETS.length - 1 }),
        (d, sf, tf, o) => {
          const dt = dts[d]!;
          const f = describeDrivetrain(dt);
          const r = both(dt, sf * f.maxWheelSpeedRpm, tf * f.standstillMaxWheelNm, OPTION_SETS[o]!);
          expect(r.pruned).toBe(r.plain);
          evPruned += r.evPruned;
          evPlain += r.evPlain;
          checked++;
        },
      ),
      { numRuns: 4000, seed: 20261202 },
    );
    // Standstill and zero torque, where pieces meet at zero speed.
    for (const dt of dts) for (const t of [0, 1, -1, 500]) for (const o of OPTION_SETS) expect(both(dt, 0, t, o).pruned).toBe(both(dt, 0, t, o).plain);
    expect(checked).toBe(4000);
    // The bounds must actually cut work (deterministic counts, not time).
    expect(evPruned).toBeLessThan(0.5 * evPlain);
  });
});
