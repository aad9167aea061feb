import { describe, it, expect } from 'vitest';
import { cycleWheelDemand, roadLoadForceN } from '../src/vehicle/roadLoad.js';
import { validateCycleTrace } from '../src/vehicle/schema.js';

const car = { massKg: 1500, rotatingMassFactor: 0.04, rollingResistance: 0.012, dragAreaM2: 0.65, airDensity: 1.225 };

describe('road load F = m·g·(Crr·cos θ·sgn v + sin θ) + ½ρ·CdA·v|v| + m(1+δ)a', () => {
  it('matches a hand calculation', () => {
    // Worked example (formula: Gillespie, Fundamentals of Vehicle Dynamics, ch. 4; g = 9.80665 m/s²
    // standard gravity; ρ = 1.225 kg/m³ ISO 2533 sea level):
    //   m = 1500 kg, Crr = 0.012, CdA = 0.65 m², δ = 0.04, v = 25 m/s (90 km/h), a = 0.5 m/s², grade 3 %
    //   θ = atan(0.03) = 0.029991 rad, cos θ = 0.999550, sin θ = 0.029987
    //   m·g = 14 709.975 N
    //   rolling  14 709.975 × 0.012 × 0.999550 = 176.440 N
    //   grade    14 709.975 × 0.029987         = 441.101 N
    //   aero     0.5 × 1.225 × 0.65 × 25²       = 248.828 N
    //   inertia  1500 × 1.04 × 0.5              = 780.000 N
    //   total                                   = 1646.369 N
    expect(roadLoadForceN(car, 25, 0.5, 3)).toBeCloseTo(1646.369, 2);
    // Flat, steady: rolling 176.520 N + aero 248.828 N = 425.348 N.
    expect(roadLoadForceN(car, 25, 0, 0)).toBeCloseTo(425.348, 2);
  });

  it('asks for no rolling resistance at standstill', () => {
    expect(roadLoadForceN(car, 0, 0, 0)).toBe(0);
    // On a 10 % grade at rest only the grade force remains: m·g·sin(atan 0.1) = 14 709.975 × 0.0995037 = 1463.697 N.
    expect(roadLoadForceN(car, 0, 0, 10)).toBeCloseTo(1463.697, 2);
  });

  it('opposes motion in reverse', () => {
    // Rolling and aerodynamic terms change sign with the direction of travel; grade and inertia do not.
    expect(roadLoadForceN(car, -10, 0, 0)).toBeCloseTo(-roadLoadForceN(car, 10, 0, 0), 9);
    const fwd = roadLoadForceN(car, 10, 0, 0);
    expect(fwd).toBeGreaterThan(0);
    // Reversing at 10 m/s on a 2 % grade (uphill facing forward) with a = +0.3 m/s² (the reverse
    // motion slowing). θ = atan(0.02): rolling −14 709.975·0.012·cos θ = −176.484 N,
    // grade +14 709.975·sin θ = +294.141 N, aero −0.5·1.225·0.65·10² = −39.813 N, inertia +468.000 N.
    expect(roadLoadForceN(car, -10, 0.3, 2)).toBeCloseTo(-176.484 + 294.141 - 39.813 + 468.0, 2);
  });

  it('conserves kinetic energy over a discretised trace', () => {
    // With no rolling or air resistance, the work over a trace from rest to rest is zero because
    // Σ m(1+δ)·(Δv/Δt)·v̄·Δt = Σ ½m(1+δ)(v₁² − v₀²) telescopes (mechanics: work–energy theorem).
    const noDrag = { ...car, rollingResistance: 0, dragAreaM2: 0 };
    const trace = validateCycleTrace({ timeS: [0, 1, 2.5, 4, 7, 9.2, 12], speedKph: [0, 7, 19, 33, 33, 12, 0] });
    const d = cycleWheelDemand(noDrag, trace, 0.31);
    let work = 0;
    let peak = 0;
    for (let k = 0; k < d.steps; k++) {
      work += d.forceN[k]! * d.speedMs[k]! * d.dtS[k]!;
      peak = Math.max(peak, Math.abs(d.forceN[k]! * d.speedMs[k]! * d.dtS[k]!));
      expect(d.wheelTorqueNm[k]).toBeCloseTo(d.forceN[k]! * 0.31, 9);
      expect(d.wheelSpeedRadS[k]).toBeCloseTo(d.speedMs[k]! / 0.31, 12);
    }
    expect(peak).toBeGreaterThan(1e4);
    expect(Math.abs(work)).toBeLessThan(1e-9 * peak);
  });
});
