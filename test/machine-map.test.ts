import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { buildMachineMap, isFeasible, lossAt, maxTorqueAt, minTorqueAt, type GridInput } from '../src/machine/map.js';
import { gridToInput } from '../src/machine/fromGrid.js';
import { gridMapSchema } from '../src/machine/schema.js';
import { ModelError } from '../src/problem.js';
import { rpmToRadS } from '../src/units.js';

const prov = { source: 'grid' as const, filledCells: 0, extrapolatedCells: 0, zeroSpeedLossChangeW: 0, zeroSpeedTorqueChangeNm: 0, notes: [] };

function sampleGrid(): GridInput {
  const speedRpm = [0, 1000, 2500, 5000];
  const torqueNm = [-100, -40, 0, 50, 100];
  return {
    speedRpm,
    torqueNm,
    lossW: speedRpm.map((n, i) => torqueNm.map((t, j) => 100 + 3 * i * i + 0.05 * t * t + 7 * j + (i === 0 ? 0 : n * 0.01))),
    maxTorqueNm: [100, 100, 80, 40],
    minTorqueNm: [-100, -100, -80, -40],
    maxSpeedRpm: 5000,
    reverse: true,
  };
}

describe('canonical map: bilinear loss interpolation', () => {
  const g = sampleGrid();
  // Zero-speed column is symmetrised, so compare nodes above zero speed against the input.
  const map = buildMachineMap('m', g, prov);

  it('reproduces the grid nodes exactly (speed > 0)', () => {
    for (let i = 1; i < g.speedRpm.length; i++) {
      for (let j = 0; j < g.torqueNm.length; j++) {
        const t = g.torqueNm[j]!;
        if (t > g.maxTorqueNm[i]! || t < g.minTorqueNm[i]!) continue;
        expect(lossAt(map, rpmToRadS(g.speedRpm[i]!), t)).toBeCloseTo(g.lossW[i]![j]!, 9);
      }
    }
  });

  it('is linear along cell edges (property test)', () => {
    // Bilinear interpolation restricted to a cell edge is linear (definition of bilinear interpolation).
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 }), fc.integer({ min: 0, max: 3 }), fc.double({ min: 0, max: 1, noNaN: true }), (i, j, u) => {
        const w = rpmToRadS(g.speedRpm[i]!);
        const t0 = g.torqueNm[j]!;
        const t1 = g.torqueNm[j + 1]!;
        const t = t0 + u * (t1 - t0);
        if (!isFeasible(map, w, t)) return;
        const expected = g.lossW[i]![j]! + u * (g.lossW[i]![j + 1]! - g.lossW[i]![j]!);
        expect(lossAt(map, w, t)).toBeCloseTo(expected, 9);
      }),
    );
  });

  it('mirrors reverse rotation: loss(−ω, τ) = loss(ω, −τ), maxTorque(−ω) = −minTorque(ω)', () => {
    const w = rpmToRadS(1800);
    expect(lossAt(map, -w, 30)).toBeCloseTo(lossAt(map, w, -30), 12);
    expect(maxTorqueAt(map, -w)).toBeCloseTo(-minTorqueAt(map, w), 12);
  });

  it('is continuous through zero speed after the zero-speed column is made symmetric', () => {
    for (const t of [-90, -40, -10, 0, 25, 60, 95]) {
      const left = lossAt(map, -1e-9, t);
      const right = lossAt(map, 1e-9, t);
      expect(Math.abs(left - right)).toBeLessThan(1e-6);
    }
    expect(map.provenance.zeroSpeedLossChangeW).toBeGreaterThan(0);
  });

  it('takes the smaller zero-speed envelope magnitude, never more than the supplier limit', () => {
    const g = sampleGrid();
    const asym = buildMachineMap('z', { ...g, maxTorqueNm: [100, 100, 80, 40], minTorqueNm: [-60, -100, -80, -40] }, prov);
    expect(asym.maxTorqueNm[0]).toBe(60);
    expect(asym.minTorqueNm[0]).toBe(-60);
    expect(asym.provenance.zeroSpeedTorqueChangeNm).toBe(40);
  });

  it('does not add mirror nodes within rounding of existing ones', () => {
    const span = 85.17841198365556;
    const torqueNm = Array.from({ length: 41 }, (_, j) => -span + (2 * span * j) / 40);
    const speedRpm = [0, 1000, 2000];
    const m = buildMachineMap(
      'r',
      { speedRpm, torqueNm, lossW: speedRpm.map(() => torqueNm.map((t) => 100 + t * t)), maxTorqueNm: [80, 80, 80], minTorqueNm: [-80, -80, -80], maxSpeedRpm: 2000, reverse: true },
      prov,
    );
    expect(m.nTorque).toBe(41);
  });

  it('refuses points outside the envelope or above max speed (no extrapolation)', () => {
    expect(Number.isNaN(lossAt(map, rpmToRadS(5001), 0))).toBe(true);
    expect(Number.isNaN(lossAt(map, rpmToRadS(5000), 41))).toBe(true);
    expect(Number.isNaN(lossAt(map, rpmToRadS(1000), -101))).toBe(true);
    // Envelope is piecewise linear in speed: halfway between 2500 (80) and 5000 (40) rpm → 60 N·m.
    expect(maxTorqueAt(map, rpmToRadS(3750))).toBeCloseTo(60, 9);
  });

  it('forbids reverse rotation when asked', () => {
    const fwd = buildMachineMap('f', { ...g, reverse: false }, prov);
    expect(Number.isNaN(lossAt(fwd, -rpmToRadS(100), 0))).toBe(true);
  });
});

describe('canonical map: validation names the field', () => {
  const expectInvalid = (g: GridInput, path: string) => {
    try {
      buildMachineMap('m', g, prov);
      expect.unreachable('should have been refused');
    } catch (err) {
      expect(err).toBeInstanceOf(ModelError);
      expect((err as ModelError).code).toBe('map-invalid');
      expect((err as ModelError).path).toBe(path);
    }
  };
  it('axes strictly ascending and finite', () => {
    const g = sampleGrid();
    expectInvalid({ ...g, speedRpm: [0, 1000, 1000, 5000] }, 'speedRpm[2]');
    expectInvalid({ ...g, torqueNm: [-100, -40, Number.NaN, 50, 100] }, 'torqueNm[2]');
  });
  it('speed axis from 0 to at least maxSpeedRpm', () => {
    const g = sampleGrid();
    expectInvalid({ ...g, speedRpm: [10, 1000, 2500, 5000] }, 'speedRpm[0]');
    expectInvalid({ ...g, maxSpeedRpm: 6000 }, 'speedRpm[3]');
  });
  it('torque axis spans the envelope', () => {
    const g = sampleGrid();
    expectInvalid({ ...g, maxTorqueNm: [100, 120, 80, 40] }, 'maxTorqueNm[1]');
  });
  it('grid shape matches the axes and loss is not negative', () => {
    const g = sampleGrid();
    expectInvalid({ ...g, lossW: g.lossW.slice(0, 3) }, 'lossW');
    const bad = g.lossW.map((r) => [...r]);
    bad[2]![3] = -1;
    expectInvalid({ ...g, lossW: bad }, 'lossW[2][3]');
  });
});

describe('efficiency grids', () => {
  it('convert with DESIGN §2 and fill zero-power cells from neighbours', () => {
    const doc = gridMapSchema.parse({
      kind: 'grid',
      speedRpm: [0, 1000, 2000],
      torqueNm: [-50, 0, 50],
      efficiency: [
        [null, null, null],
        [0.8, null, 0.9],
        [0.85, null, 0.92],
      ],
      maxTorqueNm: [50, 50, 50],
      minTorqueNm: [-50, -50, -50],
      maxSpeedRpm: 2000,
    });
    const { grid, provenance } = gridToInput(doc);
    const p = 50 * rpmToRadS(1000);
    // Motoring: P_loss = P_mech·(1/η − 1); generating: |P_mech|·(1 − η) (DESIGN.md §2).
    expect(grid.lossW[1]![2]).toBeCloseTo(p * (1 / 0.9 - 1), 9);
    expect(grid.lossW[1]![0]).toBeCloseTo(p * (1 - 0.8), 9);
    // Zero torque: linear in torque between the neighbours.
    expect(grid.lossW[1]![1]).toBeCloseTo(0.5 * (grid.lossW[1]![0]! + grid.lossW[1]![2]!), 9);
    expect(provenance.filledCells).toBe(5);
    const map = buildMachineMap('e', grid, provenance);
    expect(map.provenance.notes.join(' ')).toMatch(/filled/);
  });
});
