import { describe, expect, it } from 'vitest';
import { PointAnswers } from '../src/api/pointAnswers.js';
import { solvePoint } from '../src/solver/point.js';
import { BASE_DOC, makeDrivetrain } from './support/solverFixtures.js';

// A kept answer must be the answer the solver gives (common practice: a cache is transparent).
describe('kept single-point answers', () => {
  const dt = makeDrivetrain();
  const all = { strict: false, alternatives: true };

  it('gives the JSON text of the solver, solved once and then kept', () => {
    const kept = new PointAnswers(1 << 20);
    const points: Array<[number, number, object]> = [
      [400, 600, all],
      [-120.5, -300, { strict: true, alternatives: true }],
      [900, -2400, { strict: false, alternatives: false }],
      [1200, 5000, { modes: ['split', 'locked'], strict: false, alternatives: true }],
    ];
    for (const [n, t, o] of points) {
      const first = kept.answer(dt, { wheelSpeedRpm: n, wheelTorqueNm: t }, o as typeof all);
      const again = kept.answer(dt, { wheelSpeedRpm: n, wheelTorqueNm: t }, o as typeof all);
      expect(first).toBe(JSON.stringify(solvePoint(dt, n, t, o)));
      expect(again).toBe(first);
    }
    expect(kept.misses).toBe(points.length);
    expect(kept.hits).toBe(points.length);
  });

  it('tells apart the options, the modes and the drivetrain', () => {
    const kept = new PointAnswers(1 << 20);
    const p = { wheelSpeedRpm: 300, wheelTorqueNm: 900 };
    const withAll = kept.answer(dt, p, all);
    const lean = kept.answer(dt, p, { strict: false, alternatives: false });
    const splitOnly = kept.answer(dt, p, { modes: ['split'], strict: false, alternatives: true });
    expect(lean).not.toBe(withAll);
    expect(splitOnly).toBe(JSON.stringify(solvePoint(dt, 300, 900, { modes: ['split'] })));
    // A rebuilt drivetrain (a changed document) starts afresh, even at the same point.
    const other = makeDrivetrain({ ...BASE_DOC, auxiliaryW: (BASE_DOC.auxiliaryW ?? 0) + 1000 });
    const changed = kept.answer(other, p, all);
    expect(changed).toBe(JSON.stringify(solvePoint(other, 300, 900)));
    // Auxiliary load is drawn from the battery one for one (common practice).
    expect(JSON.parse(changed).batteryW - JSON.parse(withAll).batteryW).toBeCloseTo(1000, 6);
    expect(kept.misses).toBe(4);
  });

  it('asks -0 as 0, which prints the same', () => {
    const kept = new PointAnswers(1 << 20);
    const zero = kept.answer(dt, { wheelSpeedRpm: 0, wheelTorqueNm: 0 }, all);
    expect(kept.answer(dt, { wheelSpeedRpm: -0, wheelTorqueNm: -0 }, all)).toBe(zero);
    expect(zero).toBe(JSON.stringify(solvePoint(dt, -0, -0)));
    expect(kept.hits).toBe(1);
  });

  it('stays within its size, dropping the least recently used first', () => {
    const one = JSON.stringify(solvePoint(dt, 100, 100)).length;
    const kept = new PointAnswers(Math.ceil(3.5 * (one + 40)));
    const ask = (n: number) => kept.answer(dt, { wheelSpeedRpm: n, wheelTorqueNm: 100 }, all);
    ask(100);
    ask(101);
    ask(102);
    ask(100); // used again: now the most recent
    ask(103); // room for three: 101 goes
    expect(kept.size).toBe(3);
    const before = kept.misses;
    ask(100);
    ask(102);
    ask(103);
    expect(kept.misses).toBe(before);
    ask(101);
    expect(kept.misses).toBe(before + 1);
    expect(new PointAnswers(0).answer(dt, { wheelSpeedRpm: 100, wheelTorqueNm: 100 }, all)).toBe(JSON.stringify(solvePoint(dt, 100, 100)));
  });

  it('keeps nothing when the solver refuses the point', () => {
    const kept = new PointAnswers(1 << 20);
    expect(() => kept.answer(dt, { wheelSpeedRpm: Number.NaN, wheelTorqueNm: 1 }, all)).toThrow(/finite/);
    expect(kept.size).toBe(0);
  });
});
