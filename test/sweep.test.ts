import { describe, it, expect } from 'vitest';
import { parse } from 'csv-parse/sync';
import {
  expandSweep,
  mergeSweepRows,
  parseSweepSpec,
  rejectedGearsets,
  runSweep,
  shardDesigns,
  sweepRowsToCsv,
  type SweepSpecInput,
} from '../src/vehicle/sweep.js';
import { ModelError } from '../src/problem.js';
import { scaleMachineTorque } from '../src/machine/scale.js';
import { lossAt, maxTorqueAt } from '../src/machine/map.js';
import { drivetrainDoc, machineLookup, SUN } from './support/syntheticDrivetrain.js';
import { runSweepPooled } from '../src/vehicle/sweepPool.js';
import { catchModelError } from './support/modelError.js';

const getMachine = machineLookup();

/**
 * Planetary tooth-count rules written out independently (Müller, Epicyclic Drive Trains, 1982, from memory: coaxial
 * condition, assembly condition for N equally spaced planets, adjacency of neighbouring planets).
 */
function handbookValid(zs: number, zr: number, n: number): boolean {
  if (zr <= zs || (zr - zs) % 2 !== 0) return false; // Zp = (Zr − Zs)/2 whole
  const zp = (zr - zs) / 2;
  if ((zs + zr) % n !== 0) return false; // (Zs + Zr)/N whole
  return (zs + zp) * Math.sin(Math.PI / n) > zp + 2; // tips of neighbouring planets clear
}

/** A short invented trace: 0 → 50 km/h → 0 with a 4 % climb, 61 s. */
const shortTrace = {
  name: 'short',
  timeS: Array.from({ length: 7 }, (_, i) => i * 10),
  speedKph: [0, 30, 50, 50, 40, 15, 0],
  gradePct: [0, 0, 4, 4, 0, 0, 0],
};

function spec(over: Partial<SweepSpecInput> = {}) {
  return parseSweepSpec({
    drivetrain: drivetrainDoc(),
    vehicle: { massKg: 1500, rollingResistance: 0.01, dragAreaM2: 0.6, auxiliaryW: 200 },
    cycles: [{ cycle: shortTrace }, { cycle: { ...shortTrace, name: 'short-b', gradePct: [0, 0, -2, -2, 0, 0, 0] }, weight: 2 }],
    sunTeeth: [28, 30, 31],
    ringTeeth: [72, 74, 78],
    finalDriveRatio: [3.2, 4],
    ...over,
  });
}

describe('design sweep expansion', () => {
  it('keeps exactly the tooth combinations that pass the geometry rules', () => {
    const s = spec({ sunTeeth: { from: 16, to: 44, step: 1 }, ringTeeth: { from: 50, to: 100, step: 1 }, planets: [3, 4, 5], finalDriveRatio: [4] });
    const designs = expandSweep(s);
    const got = new Set(designs.map((d) => `${d.sunTeeth}/${d.ringTeeth}/${d.planets}`));
    let expected = 0;
    for (let zs = 16; zs <= 44; zs++) {
      for (let zr = 50; zr <= 100; zr++) {
        for (const n of [3, 4, 5]) {
          const ok = handbookValid(zs, zr, n);
          if (ok) expected++;
          expect(got.has(`${zs}/${zr}/${n}`)).toBe(ok);
        }
      }
    }
    expect(designs.length).toBe(expected);
    expect(expected).toBeGreaterThan(50);
    expect(rejectedGearsets(s).length).toBe(29 * 51 * 3 - expected);
    for (const d of designs) expect(d.planetTeeth).toBe((d.ringTeeth - d.sunTeeth) / 2);
    // Stable, unique ids and indices in order.
    expect(new Set(designs.map((d) => d.id)).size).toBe(designs.length);
    designs.forEach((d, i) => expect(d.index).toBe(i));
    expect(expandSweep(s).map((d) => d.id)).toEqual(designs.map((d) => d.id));
  });

  it('refuses a sweep with no valid gear set, and one too large', () => {
    const none = (() => {
      try {
        expandSweep(spec({ sunTeeth: [30], ringTeeth: [77] }));
      } catch (e) {
        return e as ModelError;
      }
    })();
    expect(none?.code).toBe('sweep-invalid');
    expect(() => parseSweepSpec({ drivetrain: drivetrainDoc() })).toThrow(ModelError);
    const big = (() => {
      try {
        // 500 final-drive ratios × 50 sun torque scales = 25 000 designs.
        expandSweep(spec({ sunTeeth: [30], ringTeeth: [78], finalDriveRatio: { from: 1, to: 500, step: 1 }, sunTorqueScale: { from: 0.5, to: 2.95, step: 0.05 } }));
      } catch (e) {
        return e as ModelError;
      }
    })();
    expect(big?.code).toBe('too-large');
  });

  it('splits designs into disjoint shards by index mod n', () => {
    const designs = expandSweep(spec());
    const shards = [0, 1, 2].map((i) => shardDesigns(designs, i, 3));
    expect(shards.flat().map((d) => d.index).sort((a, b) => a - b)).toEqual(designs.map((d) => d.index));
    for (const [i, s] of shards.entries()) for (const d of s) expect(d.index % 3).toBe(i);
    expect(() => shardDesigns(designs, 3, 3)).toThrow(ModelError);
  });
});

describe('sweep size limits', () => {
  it('refuses too many tooth combinations before checking any of them', () => {
    const big = spec({ sunTeeth: { from: 10, to: 509, step: 1 }, ringTeeth: { from: 600, to: 1099, step: 1 } });
    const e = catchModelError(() => expandSweep(big));
    expect([e.code, e.path]).toEqual(['too-large', 'sweep']);
  });
  it('applies the value limits to ranges as to lists', () => {
    const e = catchModelError(() => expandSweep(spec({ finalDriveRatio: { from: 5000, to: 5001, step: 1 } })));
    expect(e.code).toBe('sweep-invalid');
  });
});

describe('design sweep runs', () => {
  const s = spec({ constraints: { minLaunchWheelTorqueNm: 2450, maxUnfollowedSteps: 0 } });
  const designs = expandSweep(s);
  const whole = runSweep(s, designs, getMachine);

  it('merges shard runs into the unsharded result', () => {
    const parts = [2, 0, 1].map((i) => runSweep(s, shardDesigns(designs, i, 3), getMachine));
    expect(mergeSweepRows(parts)).toEqual(whole);
    expect(() => mergeSweepRows([parts[0]!, parts[0]!])).toThrow(ModelError);
  });

  it('gives the same rows on a worker pool of two threads', async () => {
    const pooled = await runSweepPooled(s, designs, getMachine, { threads: 2 });
    expect(pooled).toEqual(whole);
  });

  it('ranks by weighted Wh/km among the designs that meet the constraints', () => {
    const ok = whole.filter((r) => r.meetsConstraints);
    const bad = whole.filter((r) => !r.meetsConstraints);
    expect(ok.length).toBeGreaterThan(0);
    expect(bad.length).toBeGreaterThan(0);
    for (const r of bad) {
      expect(r.rank).toBeNull();
      expect(r.launchWheelTorqueNm).toBeLessThan(2450);
      expect(r.violations.join()).toMatch(/launch/);
    }
    const ranked = [...ok].sort((a, b) => a.rank! - b.rank!);
    expect(ranked.map((r) => r.rank)).toEqual(ranked.map((_, i) => i + 1));
    for (let i = 1; i < ranked.length; i++) expect(ranked[i]!.weightedWhPerKm!).toBeGreaterThanOrEqual(ranked[i - 1]!.weightedWhPerKm!);
    for (const r of ok) expect(r.launchWheelTorqueNm).toBeGreaterThanOrEqual(2450);
    // Weighted mean with weights 1 and 2.
    for (const r of whole) expect(r.weightedWhPerKm!).toBeCloseTo((r.cycles[0]!.whPerKm! + 2 * r.cycles[1]!.whPerKm!) / 3, 9);
  });

  it('scales launch torque with the machines’ torque', () => {
    // At standstill no power flows, so the launch torque is set by the torque envelopes (and the
    // set's torque ratios), which the axial-length law scales by s: launch(s·T) = s·launch(T).
    const one = spec({ sunTeeth: [30], ringTeeth: [78], finalDriveRatio: [4], sunTorqueScale: [1, 1.5], ringTorqueScale: [1, 1.5] });
    const rows = runSweep(one, expandSweep(one), getMachine);
    const base = rows.find((r) => r.sunTorqueScale === 1 && r.ringTorqueScale === 1)!;
    const both = rows.find((r) => r.sunTorqueScale === 1.5 && r.ringTorqueScale === 1.5)!;
    expect(both.launchWheelTorqueNm).toBeCloseTo(1.5 * base.launchWheelTorqueNm, 3);
  });

  it('writes one CSV line per design that reads back', () => {
    const csv = sweepRowsToCsv(whole);
    const rec = parse(csv, { columns: true }) as Record<string, string>[];
    expect(rec.length).toBe(whole.length);
    rec.forEach((line, i) => {
      expect(line.id).toBe(whole[i]!.id);
      expect(line.rank).toBe(whole[i]!.rank === null ? '' : String(whole[i]!.rank));
      expect(Number(line['whPerKm[1:short-b]'])).toBe(whole[i]!.cycles[1]!.whPerKm);
    });
  });
});

describe('machine torque scaling', () => {
  it('scales torque, envelope and loss by s at unchanged speed (axial-length law, common practice)', () => {
    const map = getMachine(SUN.name)!;
    const s = 1.3;
    const big = scaleMachineTorque(map, s);
    for (const rpm of [0, 1234, 5000, 11_000]) {
      const w = (rpm * Math.PI) / 30;
      expect(maxTorqueAt(big, w)).toBeCloseTo(s * maxTorqueAt(map, w), 9);
      for (const t of [-150, -20, 0, 35, 120]) {
        if (!Number.isFinite(lossAt(map, w, t))) continue;
        expect(lossAt(big, w, s * t)).toBeCloseTo(s * lossAt(map, w, t), 9);
      }
    }
    expect(big.maxSpeedRadS).toBe(map.maxSpeedRadS);
    expect(() => scaleMachineTorque(map, 0)).toThrow(ModelError);
  });
});
