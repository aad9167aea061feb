/**
 * Road load (standard longitudinal vehicle dynamics; Gillespie, Fundamentals of Vehicle Dynamics,
 * 1992, ch. 4; Guzzella & Sciarretta, Vehicle Propulsion Systems, 3rd ed., ch. 2):
 *
 *   F = m·g·(Crr·cos θ·sgn(v) + sin θ) + ½·ρ·CdA·v·|v| + m·(1+δ)·a
 *
 * with g = 9.80665 m/s² (standard gravity) and θ = atan(grade/100). Rolling resistance is zero at
 * standstill and opposes motion in reverse. At the wheel: T_wheel = F·r, ω_wheel = v/r.
 */
import { kphToMs, STANDARD_GRAVITY } from '../units.js';
import type { Cycle } from './schema.js';

/** The vehicle parameters the road load needs (SI). */
export interface RoadLoadParams {
  /** Mass m, kg. */
  massKg: number;
  /** δ: rotating inertia as a share of m. */
  rotatingMassFactor: number;
  /** Crr, dimensionless. */
  rollingResistance: number;
  /** CdA, m². */
  dragAreaM2: number;
  /** ρ, kg/m³. */
  airDensity: number;
}

/**
 * Tractive force at the wheels, N, for speed v (m/s, signed), acceleration a (m/s²) and road
 * grade (%, positive uphill). Source: Gillespie (1992) ch. 4; Guzzella & Sciarretta ch. 2.
 */
export function roadLoadForceN(p: RoadLoadParams, speedMs: number, accelMs2: number, gradePct = 0): number {
  const theta = Math.atan(gradePct / 100);
  const sgn = speedMs > 0 ? 1 : speedMs < 0 ? -1 : 0;
  const mg = p.massKg * STANDARD_GRAVITY;
  return (
    mg * (p.rollingResistance * Math.cos(theta) * sgn + Math.sin(theta)) +
    0.5 * p.airDensity * p.dragAreaM2 * speedMs * Math.abs(speedMs) +
    p.massKg * (1 + p.rotatingMassFactor) * accelMs2
  );
}

/**
 * Wheel demand of a cycle, one entry per time step k (samples k → k+1). Each step uses the mean
 * of its two speeds and two grades and a = Δv/Δt, so that the inertial work m(1+δ)·a·v̄·Δt equals
 * the change of kinetic energy exactly (the sum telescopes) and the distance is the trapezoid
 * v̄·Δt.
 */
export interface StepDemand {
  readonly steps: number;
  /** Step durations Δt, s. */
  readonly dtS: Float64Array;
  /** Mean speed v̄ of each step, m/s. */
  readonly speedMs: Float64Array;
  /** a = Δv/Δt, m/s². */
  readonly accelMs2: Float64Array;
  /** Mean grade of each step, %. */
  readonly gradePct: Float64Array;
  /** Road-load force F, N. */
  readonly forceN: Float64Array;
  /** Wheel speed v̄/r, rad/s. */
  readonly wheelSpeedRadS: Float64Array;
  /** Wheel torque F·r, N·m. */
  readonly wheelTorqueNm: Float64Array;
}

/** Per-step wheel demand of a cycle for a vehicle on wheels of radius r (m). */
export function cycleWheelDemand(p: RoadLoadParams, cycle: Cycle, wheelRadiusM: number): StepDemand {
  const n = cycle.timeS.length - 1;
  const dtS = new Float64Array(n);
  const speedMs = new Float64Array(n);
  const accelMs2 = new Float64Array(n);
  const gradePct = new Float64Array(n);
  const forceN = new Float64Array(n);
  const wheelSpeedRadS = new Float64Array(n);
  const wheelTorqueNm = new Float64Array(n);
  const g = cycle.gradePct;
  for (let k = 0; k < n; k++) {
    const dt = cycle.timeS[k + 1]! - cycle.timeS[k]!;
    const v0 = kphToMs(cycle.speedKph[k]!);
    const v1 = kphToMs(cycle.speedKph[k + 1]!);
    const v = 0.5 * (v0 + v1);
    const a = (v1 - v0) / dt;
    const grade = g ? 0.5 * (g[k]! + g[k + 1]!) : 0;
    const f = roadLoadForceN(p, v, a, grade);
    dtS[k] = dt;
    speedMs[k] = v;
    accelMs2[k] = a;
    gradePct[k] = grade;
    forceN[k] = f;
    wheelSpeedRadS[k] = v / wheelRadiusM;
    wheelTorqueNm[k] = f * wheelRadiusM;
  }
  return { steps: n, dtS, speedMs, accelMs2, gradePct, forceN, wheelSpeedRadS, wheelTorqueNm };
}
