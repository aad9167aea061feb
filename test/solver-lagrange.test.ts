/**
 * Split-mode optimum against the closed-form Lagrange-multiplier solution for quadratic losses.
 *
 * Derivation. With η0 = 1 the torques are fixed, T_s = T_out/(1 + k), T_r = k·T_out/(1 + k),
 * and there is no mesh loss. With machine losses L = a + b·ω² + c·T², the battery power is
 *   P = T_s·ω_s + T_r·ω_r + L_s + L_r = T_out·ω_c + const + b_s·ω_s² + b_r·ω_r²,
 * so the optimum minimises b_s·ω_s² + b_r·ω_r² subject to ω_s + k·ω_r = (1 + k)·ω_c (Willis).
 * Lagrangian Λ = b_s·ω_s² + b_r·ω_r² − λ·(ω_s + k·ω_r − (1 + k)·ω_c):
 *   ∂Λ/∂ω_s = 2·b_s·ω_s − λ = 0,  ∂Λ/∂ω_r = 2·b_r·ω_r − k·λ = 0  ⇒  ω_r = k·b_s·ω_s/b_r,
 * and substituting into the constraint, ω_s* = (1 + k)·ω_c·b_r/(b_r + k²·b_s).
 * (Lagrange multipliers for an equality-constrained quadratic: common practice.)
 *
 * The solver works on the bilinear interpolation of the grid; its minimiser lies within one
 * grid step of the smooth one: the interpolation error of a quadratic b·ω² over a step h is at
 * most b·h²/8 per machine, while moving a step H = max(h_s, k·h_r) of sun speed away from ω_s*
 * raises the smooth objective by (b_s + b_r/k²)·H², more than twice the interpolation error.
 */
import { describe, it, expect } from 'vitest';
import { buildMachineMap, type MachineMap } from '../src/machine/map.js';
import { buildDrivetrain } from '../src/solver/drivetrain.js';
import { solvePoint } from '../src/solver/point.js';

const RPM = Math.PI / 30;

function quadraticMap(name: string, maxRpm: number, steps: number, peakNm: number, a: number, b: number, c: number): MachineMap {
  const speedRpm = Array.from({ length: steps }, (_, i) => (maxRpm * i) / (steps - 1));
  const torqueNm = Array.from({ length: 41 }, (_, j) => -peakNm + (2 * peakNm * j) / 40);
  const lossW = speedRpm.map((n) => torqueNm.map((t) => a + b * (n * RPM) ** 2 + c * t * t));
  return buildMachineMap(
    name,
    { speedRpm, torqueNm, lossW, maxTorqueNm: speedRpm.map(() => peakNm), minTorqueNm: speedRpm.map(() => -peakNm), maxSpeedRpm: maxRpm, reverse: true },
    { source: 'grid', filledCells: 0, extrapolatedCells: 0, zeroSpeedLossChangeW: 0, zeroSpeedTorqueChangeNm: 0, notes: [] },
  );
}

describe('split optimum matches the Lagrange solution for quadratic losses (η0 = 1)', () => {
  const bS = 0.002;
  const bR = 0.01;
  const sunMax = 15000;
  const ringMax = 10000;
  const sunSteps = 301;
  const ringSteps = 201;
  const sun = quadraticMap('quad-sun', sunMax, sunSteps, 400, 80, bS, 0.01);
  const ring = quadraticMap('quad-ring', ringMax, ringSteps, 800, 120, bR, 0.005);
  const maps = new Map([
    [sun.name, sun],
    [ring.name, ring],
  ]);
  const dt = buildDrivetrain(
    'quad-axle',
    {
      sunMachine: 'quad-sun',
      ringMachine: 'quad-ring',
      gearset: { sunTeeth: 30, ringTeeth: 60, planets: 3, baseEfficiency: 1 },
      finalDrive: { ratio: 4, efficiency: 1 },
      wheelRadiusM: 0.3,
      battery: { maxDischargeW: 1e7, maxChargeW: 1e7 },
    },
    (n) => maps.get(n),
  );
  const k = 2;
  const step = Math.max((sunMax * RPM) / (sunSteps - 1), (k * ringMax * RPM) / (ringSteps - 1));

  const cases: [number, number][] = [
    [200, 300],
    [450, -500],
    [700, 1200],
    [-300, 400],
    [-650, -900],
    [900, 50],
  ];
  for (const [wheelRpm, wheelNm] of cases) {
    it(`sun speed at ${wheelRpm} rpm, ${wheelNm} N·m`, () => {
      const wc = 4 * wheelRpm * RPM;
      const expected = ((1 + k) * wc * bR) / (bR + k * k * bS);
      const r = solvePoint(dt, wheelRpm, wheelNm, { modes: ['split'] });
      expect(r.feasible).toBe(true);
      expect(r.mode).toBe('split');
      const got = r.sun!.speedRpm * RPM;
      expect(Math.abs(got - expected)).toBeLessThanOrEqual(step);
      // Torques fixed by the lossless split T_r = k·T_s (η0 = 1).
      expect(r.ring!.torqueNm).toBeCloseTo(k * r.sun!.torqueNm, 9);
    });
  }
});
