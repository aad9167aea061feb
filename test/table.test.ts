import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ModelError } from '../src/problem.js';
import { buildDrivetrain, type Drivetrain } from '../src/solver/drivetrain.js';
import { wheelTorqueLimits } from '../src/solver/envelope.js';
import { solvePoint } from '../src/solver/point.js';
import { buildTable } from '../src/solver/table.js';
import { buildTablePooled, TablePool } from '../src/solver/tablePool.js';
import { CELL_FLOAT_FIELDS, modeFromCode, type LookupTable } from '../src/solver/tableResult.js';
import { linspace, resolveTableSpec, type TableSpecInput } from '../src/solver/tableSpec.js';
import type { ModeSetting, PointResult, SolveOptions } from '../src/solver/types.js';
import { AXLE_DOC, testMachines } from './support/tableFixture.js';

const maps = testMachines();
const dt: Drivetrain = buildDrivetrain('test-axle', AXLE_DOC, (n) => maps.get(n));

/** The table fields of a per-point answer or mode setting, NaN where null. */
function fieldsOf(s: PointResult | ModeSetting): number[] {
  return [
    s.sun!.speedRpm,
    s.sun!.torqueNm,
    s.ring!.speedRpm,
    s.ring!.torqueNm,
    s.batteryW!,
    s.systemEfficiency ?? Number.NaN,
    s.frictionBrakeNm!,
  ];
}

function cellFields(t: LookupTable, k: number): number[] {
  return CELL_FLOAT_FIELDS.map((f) => t.cells[f][k]!);
}

/** Mode changes between neighbouring feasible cells, counted directly (reference for the report). */
function countChanges(t: LookupTable): number {
  let n = 0;
  const m = (i: number, j: number) => t.cells.mode[i * t.nTorque + j]!;
  for (let i = 0; i < t.nSpeed; i++) {
    for (let j = 0; j < t.nTorque; j++) {
      if (m(i, j) === 0) continue;
      if (i + 1 < t.nSpeed && m(i + 1, j) !== 0 && m(i + 1, j) !== m(i, j)) n++;
      if (j + 1 < t.nTorque && m(i, j + 1) !== 0 && m(i, j + 1) !== m(i, j)) n++;
    }
  }
  return n;
}

// Reverse, standstill, forward and beyond top speed (split tops out near 2180 wheel rpm here).
const SPEEDS = [-250, 0, 120, 400, 750, 1100, 1500, 1900, 2400];

describe('lookup table cells', () => {
  // Reference: the per-point optimum solvePoint (itself checked against brute force in its own tests).
  function expectCellsMatchPoints(spec: TableSpecInput, opts: SolveOptions) {
    const t = buildTable(dt, spec);
    const r = resolveTableSpec(spec);
    expect(t.nSpeed * t.nTorque).toBe(r.speedRpm.length * r.torqueNm.length);
    let feasibleCells = 0;
    let infeasibleCells = 0;
    for (let i = 0; i < t.nSpeed; i++) {
      for (let j = 0; j < t.nTorque; j++) {
        const k = i * t.nTorque + j;
        const p = solvePoint(dt, t.speedRpm[i]!, t.torqueNm[j]!, opts);
        expect(t.cells.feasible[k] === 1).toBe(p.feasible);
        if (p.feasible) {
          feasibleCells++;
          expect(modeFromCode(t.cells.mode[k]!)).toBe(p.mode);
          expect(cellFields(t, k)).toEqual(fieldsOf(p));
        } else {
          infeasibleCells++;
          expect(t.cells.mode[k]).toBe(0);
          expect(cellFields(t, k).every(Number.isNaN)).toBe(true);
        }
      }
      // Envelope row equals the wheel-torque limits at that speed.
      const lim = wheelTorqueLimits(dt, t.speedRpm[i]!, opts);
      expect(t.envelope.maxMotoringWheelNm[i]).toBe(lim.maxMotoringWheelNm);
      expect(t.envelope.maxBrakingWheelNm[i]).toBe(lim.maxBrakingWheelNm);
    }
    // The grid reaches beyond the limits, so both kinds of cell are exercised.
    expect(feasibleCells).toBeGreaterThan(0);
    expect(infeasibleCells).toBeGreaterThan(0);
    return t;
  }

  it('every cell equals the single-point answer (all modes, friction braking allowed)', () => {
    const t = expectCellsMatchPoints({ speedRpm: SPEEDS, torqueNm: { from: -3000, to: 3000, steps: 13 } }, { strict: false });
    // Friction brakes show up in cells asking for more braking than the machines take.
    expect(t.cells.frictionBrakeNm.some((v) => v > 0)).toBe(true);
    expect(t.parameters).toEqual({
      speedAxis: SPEEDS,
      torqueAxis: { from: -3000, to: 3000, steps: 13 },
      modes: null,
      strict: false,
      modeSwitchMarginW: 0,
    });
  });

  it('every cell equals the single-point answer with modes restricted and strict braking', () => {
    const t = expectCellsMatchPoints(
      { speedRpm: SPEEDS, torqueNm: [-2600, -900, -10, 0, 15, 700, 1800, 2600], modes: ['split', 'locked'], strict: true },
      { modes: ['split', 'locked'], strict: true },
    );
    for (const code of t.cells.mode) expect([0, 1, 4]).toContain(code);
    expect(t.cells.frictionBrakeNm.every((v) => Number.isNaN(v) || v === 0)).toBe(true);
  });

  it('reports progress up to every cell and carries the hash', () => {
    const seen: [number, number][] = [];
    const t = buildTable(dt, { speedRpm: [0, 500, 1000], torqueNm: [-100, 100] }, { onProgress: (d, n) => seen.push([d, n]), hash: 'abc123' });
    expect(seen).toEqual([
      [2, 6],
      [4, 6],
      [6, 6],
    ]);
    expect(t.hash).toBe('abc123');
  });
});

describe('mode-switch margin', () => {
  const base = { speedRpm: { from: 0, to: 1800, steps: 19 }, torqueNm: { from: -2400, to: 2400, steps: 25 } };
  let plain: LookupTable;
  beforeAll(() => {
    plain = buildTable(dt, base);
  });

  it('the smoothness report counts mode changes and setpoint jumps as a direct count does', () => {
    expect(plain.smoothness.modeChanges).toBe(countChanges(plain));
    expect(plain.smoothness.modeChangesWithoutMargin).toBe(plain.smoothness.modeChanges);
    expect(plain.smoothness.cellsReassigned).toBe(0);
    let jump = 0;
    const f = plain.cells.feasible;
    for (let i = 0; i < plain.nSpeed; i++) {
      for (let j = 0; j < plain.nTorque; j++) {
        const k = i * plain.nTorque + j;
        for (const n of [i + 1 < plain.nSpeed ? k + plain.nTorque : -1, j + 1 < plain.nTorque ? k + 1 : -1]) {
          if (n >= 0 && f[k] && f[n]) jump = Math.max(jump, Math.abs(plain.cells.sunTorqueNm[n]! - plain.cells.sunTorqueNm[k]!));
        }
      }
    }
    expect(plain.smoothness.maxJump.sunTorqueNm).toBe(jump);
  });

  for (const marginW of [50, 400, 2000]) {
    it(`margin ${marginW} W: never more mode changes, never worse than best + margin, settings of a real alternative`, () => {
      const t = buildTable(dt, { ...base, modeSwitchMarginW: marginW });
      const changes = countChanges(t);
      expect(t.smoothness.modeChanges).toBe(changes);
      expect(t.smoothness.modeChangesWithoutMargin).toBe(countChanges(plain));
      expect(changes).toBeLessThanOrEqual(countChanges(plain));
      let reassigned = 0;
      for (let i = 0; i < t.nSpeed; i++) {
        for (let j = 0; j < t.nTorque; j++) {
          const k = i * t.nTorque + j;
          const p = solvePoint(dt, t.speedRpm[i]!, t.torqueNm[j]!);
          expect(t.cells.feasible[k] === 1).toBe(p.feasible);
          if (!p.feasible) continue;
          const mode = modeFromCode(t.cells.mode[k]!);
          expect(t.cells.batteryW[k]!).toBeLessThanOrEqual(p.batteryW! + marginW);
          const chosen = mode === p.mode ? p : p.alternatives.find((a) => a.mode === mode);
          expect(chosen, `cell ${i},${j} uses ${mode}, which the point answer does not offer`).toBeDefined();
          expect(cellFields(t, k)).toEqual(fieldsOf(chosen!));
          if (mode !== p.mode) reassigned++;
        }
      }
      expect(t.smoothness.cellsReassigned).toBe(reassigned);
      if (marginW >= 400) {
        // With a few hundred watts of slack this axle's boundaries do get cleaner.
        expect(reassigned).toBeGreaterThan(0);
        expect(changes).toBeLessThan(countChanges(plain));
      }
    });
  }
});

describe('table on a worker pool', () => {
  // Threads start on first use (piscina minThreads 0).
  const pool = new TablePool({ threads: 2 });
  afterAll(() => pool.close());

  function comparable(t: LookupTable) {
    const { generatedAt: _ignored, cells, envelope, speedRpm, torqueNm, ...rest } = t;
    return {
      ...rest,
      speedRpm: Array.from(speedRpm),
      torqueNm: Array.from(torqueNm),
      cells: Object.fromEntries(Object.entries(cells).map(([k, v]) => [k, Array.from(v as ArrayLike<number>)])),
      envelope: { mot: Array.from(envelope.maxMotoringWheelNm), brk: Array.from(envelope.maxBrakingWheelNm) },
    };
  }

  it('gives the same table as the in-process build (with a margin, in several chunks)', async () => {
    const spec = { speedRpm: { from: -200, to: 2300, steps: 17 }, torqueNm: { from: -2500, to: 2500, steps: 15 }, modeSwitchMarginW: 300 };
    const local = buildTable(dt, spec, { hash: 'h1' });
    let last = 0;
    const pooled = await buildTablePooled(dt, spec, { pool, hash: 'h1', chunkRows: 3, onProgress: (d) => (last = d) });
    expect(comparable(pooled)).toEqual(comparable(local));
    expect(last).toBe(17 * 15);
    // A second table with another key and option set reuses the same workers.
    const spec2 = { speedRpm: [0, 300, 900], torqueNm: [-500, 0, 500], modes: ['split' as const], strict: true };
    expect(comparable(await buildTablePooled(dt, spec2, { pool }))).toEqual(comparable(buildTable(dt, spec2)));
  });
});

describe('table request', () => {
  function errorOf(f: () => unknown): ModelError {
    try {
      f();
    } catch (e) {
      return e as ModelError;
    }
    throw new Error('expected an error');
  }

  it('expands even axes with exact ends', () => {
    const a = linspace(-3, 7, 6);
    expect(Array.from(a)).toEqual([-3, -1, 1, 3, 5, 7]);
    const r = resolveTableSpec({ speedRpm: { from: 0, to: 0.3, steps: 4 }, torqueNm: [1, 2] });
    expect(r.speedRpm[3]).toBe(0.3);
    expect(r.format).toBe('json');
    expect(r.modeSwitchMarginW).toBe(0);
  });

  it('refuses unordered lists, reversed ranges, bad steps and too many cells with a path', () => {
    let e = errorOf(() => resolveTableSpec({ speedRpm: [0, 10, 10, 20], torqueNm: [0, 1] }));
    expect(e).toBeInstanceOf(ModelError);
    expect([e.code, e.path]).toEqual(['table-invalid', 'speedRpm[2]']);
    e = errorOf(() => resolveTableSpec({ speedRpm: [0, 1], torqueNm: { from: 5, to: -5, steps: 3 } }));
    expect([e.code, e.path]).toEqual(['table-invalid', 'torqueNm.to']);
    e = errorOf(() => resolveTableSpec({ speedRpm: { from: 0, to: 1, steps: 1 }, torqueNm: [0, 1] }));
    expect(e.code).toBe('table-invalid');
    e = errorOf(() => resolveTableSpec({ speedRpm: { from: 0, to: 1, steps: 1002 }, torqueNm: [0, 1] }));
    expect(e.code).toBe('table-invalid');
    e = errorOf(() => resolveTableSpec({ speedRpm: { from: 0, to: 1, steps: 100 }, torqueNm: { from: 0, to: 1, steps: 100 } }, 5000));
    expect([e.code, e.path]).toEqual(['table-invalid', 'torqueNm']);
    expect(e.message).toContain('10000 cells');
    e = errorOf(() => resolveTableSpec({ speedRpm: [0, 1], torqueNm: [0, 1], format: 'xml' } as unknown as TableSpecInput));
    expect([e.code, e.path]).toEqual(['table-invalid', 'format']);
  });
});
