import { describe, it, expect } from 'vitest';
import { pointsToGrid } from '../src/machine/fromPoints.js';
import { buildMachineMap, electricalPowerAt, interp1, lossAt, maxTorqueAt } from '../src/machine/map.js';
import { pointsMapSchema, type PointsMapDoc } from '../src/machine/schema.js';
import { RAD_S_PER_RPM, rpmToRadS } from '../src/units.js';
import { catchModelError } from './support/modelError.js';

/** Invented loss surface of a machine with inverter, W (ω rad/s, T N·m); positive everywhere used. */
const loss = (w: number, t: number) => 150 + 0.4 * w + 0.04 * t * t + 3e-4 * w * w + 2e-4 * w * t;

/** Invented envelope: 250 N·m to 4000 rpm, constant power above, 12000 rpm limit. */
const envelope = { speedRpm: [0, 4000, 8000, 12000], maxTorqueNm: [250, 250, 125, 250 / 3], minTorqueNm: [-250, -250, -125, -250 / 3] };
const envMax = (rpm: number) => (rpm <= 4000 ? 250 : (250 * 4000) / rpm);

type Point = PointsMapDoc['points'][number];

function measuredPoints(by: 'electricalW' | 'efficiency'): Point[] {
  const pts: Point[] = [];
  for (let rpm = 500; rpm <= 12000; rpm += 500) {
    for (let k = -10; k <= 10; k++) {
      const t = (envMax(rpm) * k) / 10;
      const w = rpm * RAD_S_PER_RPM;
      const pMech = t * w;
      const l = loss(w, t);
      if (by === 'electricalW') pts.push({ speedRpm: rpm, torqueNm: t, electricalW: pMech + l });
      // Efficiency as defined in DESIGN.md §2: motoring P_mech/(P_mech + P_loss), generating
      // (|P_mech| − P_loss)/|P_mech|; only points where that lies in (0, 1).
      else if (pMech > 0) pts.push({ speedRpm: rpm, torqueNm: t, efficiency: pMech / (pMech + l) });
      else if (-pMech > 2 * l) pts.push({ speedRpm: rpm, torqueNm: t, efficiency: (-pMech - l) / -pMech });
    }
  }
  return pts;
}

function doc(points: Point[], extra: Record<string, unknown> = {}): PointsMapDoc {
  return pointsMapSchema.parse({ kind: 'points', points, envelope, maxSpeedRpm: 12000, grid: { speedSteps: 31, torqueSteps: 61 }, ...extra });
}


describe('pointsToGrid', () => {
  it('builds a canonical map whose loss at the measured points matches the measurement', () => {
    const d = doc(measuredPoints('electricalW'));
    const { grid, provenance } = pointsToGrid(d);
    const map = buildMachineMap('points-test', grid, provenance);
    expect(map.nSpeed).toBe(31);
    expect(grid.speedRpm[0]).toBe(0);
    expect(grid.speedRpm[30]).toBe(12000);
    expect(grid.torqueNm).toContain(0);
    expect(grid.torqueNm[0]).toBe(-250);
    expect(grid.torqueNm[grid.torqueNm.length - 1]).toBe(250);
    expect(map.provenance.source).toBe('points');
    expect(map.provenance.fit).toMatchObject({ terms: 16, points: d.points.length });
    expect(map.provenance.fit!.r2).toBeCloseTo(1, 9);
    // Bilinear interpolation of a smooth surface errs by at most h²/8·max|∂²f| per direction
    // (linear interpolation error bound, e.g. Burden & Faires, Numerical Analysis, from memory):
    // speed h = 41.9 rad/s, ∂²/∂ω² = 6e-4 → 0.13 W; torque h = 8.33 N·m, ∂²/∂T² = 0.08 → 0.69 W.
    const hw = 400 * RAD_S_PER_RPM;
    const ht = grid.torqueNm[1]! - grid.torqueNm[0]!;
    const bound = (hw * hw * 6e-4 + ht * ht * 0.08) / 8 + 1e-6;
    for (const p of d.points) {
      const w = p.speedRpm * RAD_S_PER_RPM;
      expect(Math.abs(lossAt(map, w, p.torqueNm) - loss(w, p.torqueNm))).toBeLessThanOrEqual(bound);
    }
  });

  it('converts efficiency points with the motoring and generating formulas', () => {
    // Exact recovery of the loss surface (it lies in the fitted space) shows each point's loss
    // was P_mech·(1/η − 1) motoring and |P_mech|·(1 − η) generating (DESIGN.md §2).
    const d = doc(measuredPoints('efficiency'));
    expect(d.points.some((p) => p.torqueNm < 0)).toBe(true);
    const { grid } = pointsToGrid(d);
    for (let i = 0; i < grid.speedRpm.length; i++) {
      const w = grid.speedRpm[i]! * RAD_S_PER_RPM;
      for (let j = 0; j < grid.torqueNm.length; j++) {
        expect(grid.lossW[i]![j]).toBeCloseTo(loss(w, grid.torqueNm[j]!), 6);
      }
    }
  });

  it('gives the worked-example loss for 10 kW motoring and 12.5 kW generating at η = 0.8', () => {
    // Worked by hand from DESIGN.md §2: motoring 10 kW at η = 0.8 → 10000·(1/0.8 − 1) = 2500 W;
    // generating 12.5 kW at η = 0.8 → 12500·0.2 = 2500 W. With every point at 2500 W the fitted
    // surface is flat at 2500 W; a wrong formula (e.g. 12500·(1/0.8 − 1) = 3125 W) would tilt it.
    const rpm = (w: number) => w / RAD_S_PER_RPM;
    const d = pointsMapSchema.parse({
      kind: 'points',
      points: [
        { speedRpm: rpm(100), torqueNm: 100, efficiency: 0.8 },
        { speedRpm: rpm(100), torqueNm: -125, efficiency: 0.8 },
        { speedRpm: rpm(200), torqueNm: 50, efficiency: 0.8 },
        { speedRpm: rpm(200), torqueNm: -62.5, efficiency: 0.8 },
        { speedRpm: rpm(150), torqueNm: 0, electricalW: 2500 },
      ],
      envelope: { speedRpm: [0, 3000], maxTorqueNm: [150, 150], minTorqueNm: [-150, -150] },
      maxSpeedRpm: 3000,
      fit: { speedDegree: 1, torqueDegree: 1 },
      grid: { speedSteps: 5, torqueSteps: 7 },
    });
    const { grid, provenance } = pointsToGrid(d);
    for (const row of grid.lossW) for (const v of row) expect(v).toBeCloseTo(2500, 6);
    const map = buildMachineMap('worked', grid, provenance);
    expect(electricalPowerAt(map, 100, 100)).toBeCloseTo(12500, 6); // P_elec = 10 kW + 2.5 kW
    expect(electricalPowerAt(map, 100, -125)).toBeCloseTo(-10000, 6); // −12.5 kW + 2.5 kW
  });

  it('counts grid nodes outside the envelope or the measured region as extrapolated', () => {
    // Points on a rectangle 1000..5000 rpm × ±100 N·m (their convex hull is that rectangle).
    // Grid 0..6000 rpm in 1000 rpm steps × (−200, −100, 0, 100, 200) N·m = 35 nodes. Envelope
    // ±200 to 3000 rpm, tapering to ±100 at 6000: ±200 N·m at 4000, 5000, 6000 rpm lie outside
    // (6 nodes); of the other 29, 15 lie in the rectangle (5 speeds × 3 torques): 6 + 14 = 20.
    const points: Point[] = [];
    for (let rpm = 1000; rpm <= 5000; rpm += 1000) {
      for (const t of [-100, 0, 100]) points.push({ speedRpm: rpm, torqueNm: t, electricalW: t * rpm * RAD_S_PER_RPM + 300 + 0.1 * rpm });
    }
    const d = pointsMapSchema.parse({
      kind: 'points',
      points,
      envelope: { speedRpm: [0, 3000, 6000], maxTorqueNm: [200, 200, 100], minTorqueNm: [-200, -200, -100] },
      maxSpeedRpm: 6000,
      fit: { speedDegree: 1, torqueDegree: 1 },
      grid: { speedSteps: 7, torqueSteps: 5 },
    });
    const { grid, provenance } = pointsToGrid(d);
    expect(grid.torqueNm).toEqual([-200, -100, 0, 100, 200]);
    expect(provenance.extrapolatedCells).toBe(20);
    expect(provenance.notes.join(' ')).toContain('14 of 35 grid nodes inside the envelope');
  });

  it('clamps a fitted loss that falls below zero away from the measurements', () => {
    // Linear loss 100 + 1·T measured at 0..100 N·m reaches −100 W at −200 N·m (arithmetic).
    const points: Point[] = [];
    for (const rpm of [1000, 2000, 3000]) for (const t of [0, 50, 100]) points.push({ speedRpm: rpm, torqueNm: t, electricalW: t * rpm * RAD_S_PER_RPM + 100 + t });
    const d = pointsMapSchema.parse({
      kind: 'points',
      points,
      envelope: { speedRpm: [0, 3000], maxTorqueNm: [200, 200], minTorqueNm: [-200, -200] },
      maxSpeedRpm: 3000,
      fit: { speedDegree: 1, torqueDegree: 1 },
      grid: { speedSteps: 4, torqueSteps: 5 },
    });
    const { grid, provenance } = pointsToGrid(d);
    expect(grid.lossW.map((row) => row[0])).toEqual([0, 0, 0, 0]);
    expect(grid.lossW[1]![4]).toBeCloseTo(300, 6);
    expect(provenance.notes.join(' ')).toContain('4 grid nodes where the polynomial fell below zero (down to -100 W)');
  });

  it('refuses efficiency at zero shaft power with the point path', () => {
    const pts = measuredPoints('electricalW');
    pts.splice(2, 0, { speedRpm: 0, torqueNm: 50, efficiency: 0.9 });
    let e = catchModelError(() => pointsToGrid(doc(pts)));
    expect(e.code).toBe('map-invalid');
    expect(e.path).toBe('points[2].efficiency');
    pts[2] = { speedRpm: 1000, torqueNm: 0, efficiency: 0.9 };
    e = catchModelError(() => pointsToGrid(doc(pts)));
    expect(e.path).toBe('points[2].efficiency');
  });

  it('refuses a clearly negative loss and clamps one within the noise tolerance', () => {
    const pts = measuredPoints('electricalW');
    const w = 1000 * RAD_S_PER_RPM;
    // P_mech = 100·104.72 = 10472 W; tolerance −(1 % · 10472 + 1) = −105.7 W.
    pts[7] = { speedRpm: 1000, torqueNm: 100, electricalW: 100 * w - 300 };
    const e = catchModelError(() => pointsToGrid(doc(pts)));
    expect(e.code).toBe('map-invalid');
    expect(e.path).toBe('points[7].electricalW');
    pts[7] = { speedRpm: 1000, torqueNm: 100, electricalW: 100 * w - 50 };
    const { provenance } = pointsToGrid(doc(pts));
    expect(provenance.notes.join(' ')).toContain('1 point with a slightly negative measured loss');
  });

  it('keeps every corner of the given envelope (never more torque than given)', () => {
    const corner = { speedRpm: [0, 3000, 5000, 12000], maxTorqueNm: [250, 250, 150, 60], minTorqueNm: [-250, -250, -150, -60] };
    const { grid, provenance } = pointsToGrid(doc(measuredPoints('electricalW'), { envelope: corner }));
    const map = buildMachineMap('corner', grid, provenance);
    expect(maxTorqueAt(map, rpmToRadS(5000))).toBeCloseTo(150, 9);
    for (let n = 0; n <= 12000; n += 250) {
      const given = interp1(corner.speedRpm, corner.maxTorqueNm, n);
      expect(maxTorqueAt(map, rpmToRadS(n))).toBeLessThanOrEqual(given + 1e-9);
    }
  });

  it('refuses a bad envelope with the element path', () => {
    const bad = (env: Record<string, number[]>, path: string) => {
      const e = catchModelError(() => pointsToGrid(doc(measuredPoints('electricalW'), { envelope: { ...envelope, ...env } })));
      expect(e.code).toBe('map-invalid');
      expect(e.path).toBe(path);
    };
    bad({ maxTorqueNm: [250, 250, 125, -1] }, 'envelope.maxTorqueNm[3]');
    bad({ minTorqueNm: [-250, 5, -125, -80] }, 'envelope.minTorqueNm[1]');
    bad({ speedRpm: [0, 4000, 4000, 12000] }, 'envelope.speedRpm[2]');
    bad({ speedRpm: [100, 4000, 8000, 12000] }, 'envelope.speedRpm[0]');
    bad({ speedRpm: [0, 4000, 8000, 11000] }, 'envelope.speedRpm[3]');
    bad({ minTorqueNm: [-250, -250, -125] }, 'envelope.minTorqueNm');
  });

  it('refuses an envelope that would give the grid more speeds than an axis holds, before fitting', () => {
    // 399 envelope speeds off the even steps (the envelope itself is within the schema's 400).
    const speeds = Array.from({ length: 399 }, (_, i) => (i === 398 ? 12000 : i * 30 + 7 * Math.min(i, 1)));
    const big = { speedRpm: speeds, maxTorqueNm: speeds.map(envMax), minTorqueNm: speeds.map((s) => -envMax(s)) };
    // Points that could not be fitted either: the envelope is refused first, with its own path.
    const pts = measuredPoints('electricalW').filter((p) => p.speedRpm === 3000);
    const e = catchModelError(() => pointsToGrid(doc(pts, { envelope: big })));
    expect(e.code).toBe('map-invalid');
    expect(e.path).toBe('envelope.speedRpm');
    expect(e.message).toMatch(/^the grid would have 428 speeds \(31 even steps/);
    // 398 envelope speeds below the limit and 31 even steps, 0 shared: 428. With two even steps (0
    // and 12000) the same envelope builds on 399 speeds.
    const ok = pointsToGrid(doc(measuredPoints('electricalW'), { envelope: big, grid: { speedSteps: 2, torqueSteps: 61 } }));
    expect(ok.grid.speedRpm).toHaveLength(399);
  });

  it('reports a fit the points cannot support as fit-failed', () => {
    const pts = measuredPoints('electricalW').filter((p) => p.speedRpm === 3000);
    const e = catchModelError(() => pointsToGrid(doc(pts)));
    expect(e.code).toBe('fit-failed');
    expect(e.path).toBe('points');
    expect(e.message).toContain('speed takes only 1 distinct value');
  });
});
