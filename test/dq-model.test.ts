import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import {
  baseSpeedRpm,
  dqDriveFromDoc,
  dqLossW,
  dqToGrid,
  dqTorqueNm,
  mtpaCurrents,
  operatingPoint,
  steadyStateVoltage,
  torqueEnvelope,
  type DqMachine,
} from '../src/machine/dqModel.js';
import { buildMachineMap } from '../src/machine/map.js';
import { dqModelSchema, type DqModelDoc } from '../src/machine/schema.js';
import { ModelError } from '../src/problem.js';
import { RAD_S_PER_RPM } from '../src/units.js';

// Invented test machines (not real products).
const IPM: DqMachine = { polePairs: 4, rsOhm: 0.012, ldH: 0.21e-3, lqH: 0.54e-3, fluxWb: 0.068, maxCurrentA: 220, maxVoltageV: 350 / Math.sqrt(3) };
const SPM: DqMachine = { polePairs: 4, rsOhm: 0.02, ldH: 0.3e-3, lqH: 0.3e-3, fluxWb: 0.08, maxCurrentA: 200, maxVoltageV: 200 };

function docOf(m: DqMachine, extra: Record<string, unknown> = {}): DqModelDoc {
  return dqModelSchema.parse({
    kind: 'dq-model',
    polePairs: m.polePairs,
    statorResistanceOhm: m.rsOhm,
    ldH: m.ldH,
    lqH: m.lqH,
    fluxLinkageWb: m.fluxWb,
    maxCurrentA: m.maxCurrentA,
    dcVoltageV: m.maxVoltageV * Math.sqrt(3),
    maxSpeedRpm: 12000,
    ...extra,
  });
}

function torqueOf(m: DqMachine, id: number, iq: number): number {
  // 1.5·p·(ψ·iq + (Ld − Lq)·id·iq), amplitude-invariant dq (Morimoto et al. 1990).
  return 1.5 * m.polePairs * (m.fluxWb * iq + (m.ldH - m.lqH) * id * iq);
}

function voltageOf(m: DqMachine, id: number, iq: number, we: number): number {
  // vd = Rs·id − ωe·Lq·iq, vq = Rs·iq + ωe·(Ld·id + ψ) (steady-state PM machine equations).
  return Math.hypot(m.rsOhm * id - we * m.lqH * iq, m.rsOhm * iq + we * (m.ldH * id + m.fluxWb));
}

/** Base speed (electrical rad/s) from baseSpeedRpm. */
function baseWe(m: DqMachine): number {
  return baseSpeedRpm(docOf(m)) * RAD_S_PER_RPM * m.polePairs;
}

describe('MTPA', () => {
  it('d-axis current equals the closed form at several currents', () => {
    // Source: Morimoto et al., IEEE Trans. Ind. Appl., 1990: id = ψ/(4(Lq−Ld)) − √(ψ²/(16(Lq−Ld)²) + I²/2).
    const dL = IPM.lqH - IPM.ldH;
    for (const I of [10, 50, 120, 220, 400]) {
      const ref = IPM.fluxWb / (4 * dL) - Math.sqrt((IPM.fluxWb * IPM.fluxWb) / (16 * dL * dL) + (I * I) / 2);
      const { idA, iqA } = mtpaCurrents(I, IPM.ldH, IPM.lqH, IPM.fluxWb);
      expect(Math.abs(idA - ref)).toBeLessThan(1e-9 * I);
      expect(Math.hypot(idA, iqA)).toBeCloseTo(I, 9);
    }
  });

  it('is the maximum of torque over the current angle on the circle', () => {
    // Reference: brute-force scan of the current angle β (id = −I·sin β, iq = I·cos β).
    const n = 200_000;
    for (const I of [30, 110, 220]) {
      const { idA, iqA } = mtpaCurrents(I, IPM.ldH, IPM.lqH, IPM.fluxWb);
      const tMtpa = torqueOf(IPM, idA, iqA);
      let best = -Infinity;
      let bestId = 0;
      for (let k = 0; k <= n; k++) {
        const b = (k / n) * (Math.PI / 2);
        const t = torqueOf(IPM, -I * Math.sin(b), I * Math.cos(b));
        if (t > best) {
          best = t;
          bestId = -I * Math.sin(b);
        }
      }
      expect(tMtpa).toBeGreaterThanOrEqual(best * (1 - 1e-12));
      expect(tMtpa - best).toBeLessThan(1e-9 * best);
      expect(Math.abs(idA - bestId)).toBeLessThan(2 * I * (Math.PI / 2 / n));
    }
  });

  it('gives id = 0 for a surface machine (Ld = Lq)', () => {
    // Source: Morimoto et al. 1990 (no reluctance torque, so all current on the q axis).
    for (const I of [1, 100, 1000]) expect(mtpaCurrents(I, 0.3e-3, 0.3e-3, 0.08)).toEqual({ idA: 0, iqA: I });
  });
});

describe('surface machine below base speed', () => {
  it('base speed matches the hand calculation from the voltage limit', () => {
    // Hand calculation: MTPA at I_max puts id = 0, iq = I, so vd = −ωe·Lq·I, vq = Rs·I + ωe·ψ and
    // |v|² = V_max² gives (ψ² + (Lq·I)²)·ωe² + 2·Rs·I·ψ·ωe + (Rs·I)² − V_max² = 0; take the positive root.
    const I = SPM.maxCurrentA;
    const a = SPM.fluxWb ** 2 + (SPM.lqH * I) ** 2;
    const b = 2 * SPM.rsOhm * I * SPM.fluxWb;
    const c = (SPM.rsOhm * I) ** 2 - SPM.maxVoltageV ** 2;
    const we = (-b + Math.sqrt(b * b - 4 * a * c)) / (2 * a);
    expect(baseWe(SPM) / we).toBeCloseTo(1, 10);

    // Textbook form with Rs = 0: ωb = V_max/√(ψ² + (Lq·I)²) (e.g. Krishnan, Permanent Magnet Synchronous and Brushless DC Motor Drives, 2010, from memory).
    const lossless = { ...SPM, rsOhm: 1e-15 };
    expect(baseWe(lossless) / (SPM.maxVoltageV / Math.sqrt(a))).toBeCloseTo(1, 9);
  });

  it('keeps id = 0 below base speed and leaves MTPA just above it', () => {
    // Source: Morimoto et al. 1990 (MTPA of a surface machine is id = 0 while the voltage allows).
    const wb = baseWe(SPM);
    const t0 = torqueOf(SPM, 0, SPM.maxCurrentA);
    for (const k of [0, 0.3, 0.6, 0.99]) {
      for (const f of [0.2, 0.6, 1, -0.6, -1]) {
        const op = operatingPoint(SPM, f * t0, k * wb)!;
        expect(op).not.toBeNull();
        expect(Math.abs(op.idA)).toBeLessThan(1e-9 * SPM.maxCurrentA);
        expect(op.region).toBe('mtpa');
      }
    }
    const above = operatingPoint(SPM, 0.99 * t0, 1.02 * wb)!;
    expect(above.region).toBe('field-weakening');
    expect(above.idA).toBeLessThan(0);
  });
});

describe('operating points', () => {
  it('deliver the requested torque by 1.5·p·(ψ·iq + (Ld − Lq)·id·iq)', () => {
    // Source: Morimoto et al. 1990 (torque of a salient PM machine, amplitude-invariant dq).
    const wb = baseWe(IPM);
    for (const k of [0, 0.5, 1.5, 3]) {
      const env = torqueEnvelope(IPM, k * wb);
      for (const f of [0.05, 0.3, 0.7, 0.999]) {
        for (const t of [f * env.maxTorqueNm, f * env.minTorqueNm]) {
          const op = operatingPoint(IPM, t, k * wb)!;
          expect(op).not.toBeNull();
          expect(torqueOf(IPM, op.idA, op.iqA)).toBeCloseTo(t, 6);
          expect(dqTorqueNm(IPM.polePairs, IPM.fluxWb, IPM.ldH, IPM.lqH, op.idA, op.iqA)).toBeCloseTo(t, 6);
          expect(op.voltageV).toBeLessThanOrEqual(IPM.maxVoltageV * (1 + 1e-12));
          expect(op.currentA).toBeLessThanOrEqual(IPM.maxCurrentA * (1 + 1e-9));
          const v = steadyStateVoltage(IPM, op.idA, op.iqA, k * wb);
          expect(Math.hypot(v.vdV, v.vqV)).toBeCloseTo(voltageOf(IPM, op.idA, op.iqA, k * wb), 9);
        }
      }
    }
  });

  it('returns null beyond the envelope', () => {
    const wb = baseWe(IPM);
    const env = torqueEnvelope(IPM, 2 * wb);
    expect(operatingPoint(IPM, env.maxTorqueNm * 1.001, 2 * wb)).toBeNull();
    expect(operatingPoint(IPM, env.minTorqueNm * 1.001, 2 * wb)).toBeNull();
    expect(operatingPoint(IPM, 1e6, 0)).toBeNull();
  });

  it('above base speed lie on the voltage limit, inside the current circle, at the least feasible current', () => {
    // Reference: brute-force scan of id along the constant-torque curve for the least current meeting both limits.
    const wb = baseWe(IPM);
    const n = 200_000;
    // (At 1.3·ωb half torque still fits under the voltage limit with MTPA, so only near-envelope torques there.)
    const cases: [number, number[]][] = [
      [1.3, [0.95]],
      [2, [0.5, 0.95]],
      [3, [0.5, 0.95]],
    ];
    for (const [k, fractions] of cases) {
      const we = k * wb;
      const env = torqueEnvelope(IPM, we);
      for (const t of fractions.flatMap((f) => [f * env.maxTorqueNm, f * env.minTorqueNm])) {
        const op = operatingPoint(IPM, t, we)!;
        expect(op.region).toBe('field-weakening');
        expect(op.voltageV / IPM.maxVoltageV).toBeCloseTo(1, 9);
        expect(op.currentA).toBeLessThanOrEqual(IPM.maxCurrentA * (1 + 1e-9));
        let best = Infinity;
        for (let q = 0; q <= n; q++) {
          const id = -IPM.maxCurrentA * (q / n);
          const iq = t / (1.5 * IPM.polePairs * (IPM.fluxWb + (IPM.ldH - IPM.lqH) * id));
          const i = Math.hypot(id, iq);
          if (i <= IPM.maxCurrentA && voltageOf(IPM, id, iq, we) <= IPM.maxVoltageV && i < best) best = i;
        }
        expect(op.currentA).toBeLessThanOrEqual(best + 1e-9);
        expect(op.currentA).toBeGreaterThan(best - 0.01);
      }
    }
  });
});

describe('torque envelope', () => {
  it('matches a brute-force search over the current plane, both directions', () => {
    // Reference: dense polar scan of (id, iq) keeping points inside the current circle and voltage limit.
    const wb = baseWe(IPM);
    const t0 = torqueEnvelope(IPM, 0).maxTorqueNm;
    for (const k of [0.5, 1.5, 2.5, 4]) {
      const we = k * wb;
      const env = torqueEnvelope(IPM, we);
      let hi = -Infinity;
      let lo = Infinity;
      const nA = 3600;
      const nR = 400;
      for (let a = 0; a < nA; a++) {
        const g = (2 * Math.PI * a) / nA;
        const c = Math.cos(g);
        const s = Math.sin(g);
        for (let r = 1; r <= nR; r++) {
          const i = (IPM.maxCurrentA * r) / nR;
          const id = i * c;
          const iq = i * s;
          if (voltageOf(IPM, id, iq, we) > IPM.maxVoltageV) continue;
          const t = torqueOf(IPM, id, iq);
          if (t > hi) hi = t;
          if (t < lo) lo = t;
        }
      }
      expect(hi).toBeLessThanOrEqual(env.maxTorqueNm * (1 + 1e-9));
      expect(hi).toBeGreaterThan(env.maxTorqueNm - 0.01 * t0);
      expect(lo).toBeGreaterThanOrEqual(env.minTorqueNm * (1 + 1e-9));
      expect(lo).toBeLessThan(env.minTorqueNm + 0.01 * t0);
      // With Rs > 0 the resistive drop opposes the back-EMF when generating: |v|² carries +(4/3)·Rs·ωe·T/p.
      if (k > 1) expect(-env.minTorqueNm).toBeGreaterThan(env.maxTorqueNm);
    }
  });

  it('is flat below base speed and falls with speed above it', () => {
    // Common practice: constant-torque region up to base speed, then field weakening.
    const wb = baseWe(IPM);
    const t0 = torqueEnvelope(IPM, 0).maxTorqueNm;
    expect(torqueEnvelope(IPM, 0.9 * wb).maxTorqueNm / t0).toBeCloseTo(1, 9);
    expect(torqueEnvelope(IPM, 0.9 * wb).maxLimit).toBe('mtpa');
    let prev = t0;
    for (let k = 1.05; k <= 5; k += 0.25) {
      const e = torqueEnvelope(IPM, k * wb);
      expect(e.maxTorqueNm).toBeLessThan(prev);
      expect(e.maxLimit).toBe('field-weakening');
      prev = e.maxTorqueNm;
    }
  });

  it('holds power nearly constant when ψ/L = I_max (surface machine, Rs = 0)', () => {
    // Voltage circle (id + ψ/L)² + iq² = r², r = V_max/(ωe·L), centred on the current circle when ψ = L·I.
    // Above base speed the best point is the circles' crossing: id = (r² − 2I²)/(2I), iq = √(I² − id²)
    // (geometry of the current and voltage limits, Morimoto et al. 1990). Power then rises from
    // 1.5·V·I/√2 at base speed towards 1.5·V·I: "optimal field weakening" (Soong & Miller, IEE Proc.
    // Electr. Power Appl., 1994, from memory); roughly constant power is common practice.
    const I = 200;
    const L = 0.3e-3;
    const m: DqMachine = { polePairs: 4, rsOhm: 0, ldH: L, lqH: L, fluxWb: L * I, maxCurrentA: I, maxVoltageV: 200 };
    const wb = m.maxVoltageV / Math.sqrt(m.fluxWb ** 2 + (L * I) ** 2);
    const pCeil = 1.5 * m.maxVoltageV * I;
    const powers: number[] = [];
    for (const k of [1.5, 2, 3, 4, 6, 8]) {
      const we = k * wb;
      const r = m.maxVoltageV / (we * L);
      const id = (r * r - 2 * I * I) / (2 * I);
      const ref = 1.5 * m.polePairs * m.fluxWb * Math.sqrt(I * I - id * id);
      const env = torqueEnvelope(m, we);
      expect(env.maxTorqueNm / ref).toBeCloseTo(1, 6);
      const p = (env.maxTorqueNm * we) / m.polePairs;
      expect(p).toBeLessThanOrEqual(pCeil * (1 + 1e-9));
      expect(p).toBeGreaterThan(pCeil / Math.SQRT2);
      if (k >= 2) powers.push(p);
    }
    expect(Math.max(...powers) / Math.min(...powers)).toBeLessThan(1.07);
  });

  it('follows MTPV when ψ/Ld < I_max (surface machine, Rs = 0)', () => {
    // With the voltage-circle centre (−ψ/L, 0) inside the current circle, at high speed the best
    // point is the top of the voltage circle: id = −ψ/L, iq = V_max/(ωe·L) (Morimoto et al. 1990).
    const L = 0.3e-3;
    const m: DqMachine = { polePairs: 4, rsOhm: 0, ldH: L, lqH: L, fluxWb: 0.05, maxCurrentA: 250, maxVoltageV: 200 };
    const r = 100;
    const we = m.maxVoltageV / (L * r);
    const env = torqueEnvelope(m, we);
    expect(env.maxLimit).toBe('mtpv');
    expect(env.maxTorqueNm / (1.5 * m.polePairs * m.fluxWb * r)).toBeCloseTo(1, 6);
    const op = operatingPoint(m, env.maxTorqueNm, we)!;
    expect(op.idA / (-m.fluxWb / L)).toBeCloseTo(1, 3);
    expect(op.currentA).toBeLessThan(m.maxCurrentA);
  });
});

describe('dqToGrid', () => {
  const doc = docOf(IPM, {
    ironLoss: { hysteresisWPerHz: 0.6, eddyWPerHz2: 0.0015 },
    mechanicalLoss: { frictionNm: 0.15, viscousNmPerRadS: 2e-4 },
    inverterLoss: { constantW: 30, perAmpW: 1.2, resistanceOhm: 0.002 },
    grid: { speedSteps: 25, torqueSteps: 41 },
  });
  const { grid, provenance } = dqToGrid(doc);

  it('builds a canonical map with non-negative losses', () => {
    const map = buildMachineMap('ipm', grid, provenance);
    expect(map.nSpeed).toBe(25);
    expect(grid.speedRpm[0]).toBe(0);
    expect(grid.speedRpm[24]).toBe(12000);
    expect(grid.torqueNm[20]).toBe(0);
    expect(grid.torqueNm[0]).toBe(-grid.torqueNm[40]!);
    for (const row of grid.lossW) for (const l of row) expect(Number.isFinite(l) && l >= 0).toBe(true);
    // Zero speed: no voltage problem, MTPA at I_max both ways.
    const t0 = torqueOf(IPM, mtpaCurrents(220, IPM.ldH, IPM.lqH, IPM.fluxWb).idA, mtpaCurrents(220, IPM.ldH, IPM.lqH, IPM.fluxWb).iqA);
    expect(grid.maxTorqueNm[0]).toBeCloseTo(t0, 6);
    expect(grid.minTorqueNm[0]).toBeCloseTo(-t0, 6);
    expect(provenance.source).toBe('dq-model');
    expect(provenance.notes.some((n) => n.includes('base speed'))).toBe(true);
  });

  it('gives a sensible efficiency at a mid point', () => {
    // Common practice: a PM drive unit (machine + inverter) runs at roughly 90–97 % mid-map.
    const i = 12; // 6000 rpm
    const j = grid.torqueNm.findIndex((t) => t >= grid.maxTorqueNm[i]! / 2);
    const p = grid.torqueNm[j]! * grid.speedRpm[i]! * RAD_S_PER_RPM;
    const eff = p / (p + grid.lossW[i]![j]!);
    expect(eff).toBeGreaterThan(0.85);
    expect(eff).toBeLessThan(0.99);
  });

  it('sums the standard loss terms at a node', () => {
    // Copper 1.5·Rs·I², iron (k_h·f + k_e·f²)·(ψs/ψ)², drag T_f·ω + b·ω², inverter P0 + k·I + 1.5·R·I²;
    // the machine's electromagnetic torque covers shaft torque plus drag.
    const i = 16;
    const j = 30;
    const w = grid.speedRpm[i]! * RAD_S_PER_RPM;
    const drag = 0.15 + 2e-4 * w;
    const op = operatingPoint(IPM, grid.torqueNm[j]! + drag, 4 * w)!;
    const i2 = op.currentA ** 2;
    const f = (4 * w) / (2 * Math.PI);
    const psiS2 = (IPM.ldH * op.idA + IPM.fluxWb) ** 2 + (IPM.lqH * op.iqA) ** 2;
    const ref =
      1.5 * IPM.rsOhm * i2 +
      (0.6 * f + 0.0015 * f * f) * (psiS2 / IPM.fluxWb ** 2) +
      (0.15 * w + 2e-4 * w * w) +
      (30 + 1.2 * op.currentA + 1.5 * 0.002 * i2);
    expect(grid.lossW[i]![j]! / ref).toBeCloseTo(1, 9);
    expect(dqLossW(dqDriveFromDoc(doc), grid.speedRpm[i]!, grid.torqueNm[j]!)! / ref).toBeCloseTo(1, 9);
  });

  it('fills nodes beyond the envelope from the envelope torque and counts them', () => {
    const d = dqDriveFromDoc(doc);
    let outside = 0;
    for (let i = 0; i < grid.speedRpm.length; i++) {
      const edgeHi = dqLossW(d, grid.speedRpm[i]!, grid.maxTorqueNm[i]!)!;
      const edgeLo = dqLossW(d, grid.speedRpm[i]!, grid.minTorqueNm[i]!)!;
      for (let j = 0; j < grid.torqueNm.length; j++) {
        const t = grid.torqueNm[j]!;
        if (t > grid.maxTorqueNm[i]!) {
          outside++;
          expect(grid.lossW[i]![j]! / edgeHi).toBeCloseTo(1, 9);
        } else if (t < grid.minTorqueNm[i]!) {
          outside++;
          expect(grid.lossW[i]![j]! / edgeLo).toBeCloseTo(1, 9);
        }
      }
    }
    expect(outside).toBeGreaterThan(0);
    expect(provenance.extrapolatedCells).toBe(outside);
  });

  it('accepts an even number of torque steps', () => {
    const g = dqToGrid(docOf(IPM, { grid: { speedSteps: 5, torqueSteps: 8 } }));
    expect(() => buildMachineMap('even', g.grid, g.provenance)).not.toThrow();
    expect(g.grid.torqueNm).toHaveLength(8);
  });
});

describe('bad physics', () => {
  function codeAndPath(f: () => unknown): { code: string; path: string | undefined; message: string } {
    try {
      f();
    } catch (e) {
      expect(e).toBeInstanceOf(ModelError);
      const m = e as ModelError;
      return { code: m.code, path: m.path, message: m.message };
    }
    throw new Error('expected a ModelError');
  }

  it('refuses Lq < Ld', () => {
    const r = codeAndPath(() => dqToGrid(docOf({ ...IPM, ldH: 0.5e-3, lqH: 0.2e-3 })));
    expect(r.code).toBe('map-invalid');
    expect(r.path).toBe('lqH');
    expect(r.message).toContain('Lq >= Ld');
  });

  it('refuses a resistive drop that reaches the voltage limit at standstill', () => {
    const r = codeAndPath(() => dqToGrid(docOf({ ...IPM, rsOhm: 1 })));
    expect(r).toMatchObject({ code: 'map-invalid', path: 'statorResistanceOhm' });
  });

  it('refuses a machine with no torque at standstill', () => {
    const r = codeAndPath(() => baseSpeedRpm(docOf({ ...SPM, fluxWb: 1e-300, maxCurrentA: 1e-30 })));
    expect(r).toMatchObject({ code: 'map-invalid', path: 'fluxLinkageWb' });
  });

  it('refuses a DC voltage too low to reach the speed limit and names the reachable speed', () => {
    // No-load limit with ψ/Ld > I_max: id = −I_max, iq = 0, so (Rs·I)² + ωe²·(ψ − Ld·I)² = V_max²
    // (voltage-limit geometry, Morimoto et al. 1990).
    const m = { ...IPM, maxVoltageV: 60 / Math.sqrt(3) };
    const we = Math.sqrt(m.maxVoltageV ** 2 - (m.rsOhm * m.maxCurrentA) ** 2) / (m.fluxWb - m.ldH * m.maxCurrentA);
    const rpm = we / m.polePairs / RAD_S_PER_RPM;
    const r = codeAndPath(() => dqToGrid(docOf(m)));
    expect(r).toMatchObject({ code: 'map-invalid', path: 'dcVoltageV' });
    const said = Number(/up to ([\d.]+) rpm/.exec(r.message)![1]);
    expect(Math.abs(said - rpm)).toBeLessThan(0.01 * rpm);
    // Barely above the resistive drop: no speed is reachable at all.
    const r2 = codeAndPath(() => dqToGrid(docOf({ ...IPM, maxVoltageV: 2.7 })));
    expect(r2).toMatchObject({ code: 'map-invalid', path: 'dcVoltageV' });
  });
});

describe('demo machine maps/ring-machine.json', () => {
  it('parses, builds and has the intended size', () => {
    const raw = JSON.parse(readFileSync(new URL('../maps/ring-machine.json', import.meta.url), 'utf8'));
    expect(raw.kind).toBe('dq-model');
    expect(raw.description).toMatch(/invented/i);
    const doc = dqModelSchema.parse(raw);
    const { grid, provenance } = dqToGrid(doc);
    const map = buildMachineMap('ring-machine', grid, provenance);
    expect(map.maxSpeedRadS).toBeCloseTo(12000 * RAD_S_PER_RPM, 9);
    let pMax = 0;
    for (let i = 0; i < grid.speedRpm.length; i++) pMax = Math.max(pMax, grid.maxTorqueNm[i]! * grid.speedRpm[i]! * RAD_S_PER_RPM);
    expect(pMax).toBeGreaterThan(55_000);
    expect(pMax).toBeLessThan(75_000);
  });
});
