import { describe, expect, it } from 'vitest';
import { efficiencyFromLoss, kphToMs, lossFromEfficiency, radSToRpm, rpmToRadS, STANDARD_GRAVITY, SEA_LEVEL_AIR_DENSITY } from '../src/units.js';

describe('unit conversions', () => {
  it('1 rpm = 2π/60 rad/s', () => {
    // By definition of the revolution per minute (one revolution = 2π rad, one minute = 60 s).
    expect(rpmToRadS(1)).toBeCloseTo((2 * Math.PI) / 60, 15);
    expect(rpmToRadS(60)).toBeCloseTo(2 * Math.PI, 14);
    expect(radSToRpm(rpmToRadS(12345.6))).toBeCloseTo(12345.6, 9);
  });

  it('km/h to m/s', () => {
    // 1 km/h = 1000 m / 3600 s, by definition.
    expect(kphToMs(36)).toBeCloseTo(10, 14);
  });

  it('standard constants', () => {
    // g = 9.80665 m/s², standard gravity (3rd CGPM, 1901); ρ = 1.225 kg/m³ (ISO 2533, sea level, 15 °C).
    expect(STANDARD_GRAVITY).toBe(9.80665);
    expect(SEA_LEVEL_AIR_DENSITY).toBe(1.225);
  });
});

describe('efficiency ⇄ loss in all four quadrants', () => {
  // Definitions (common practice): motoring η = P_mech/P_elec; generating η = |P_elec|/|P_mech|.
  const cases = [
    { t: 100, w: 200, eff: 0.9 }, // forward motoring
    { t: -100, w: 200, eff: 0.85 }, // forward generating
    { t: -100, w: -200, eff: 0.9 }, // reverse motoring
    { t: 100, w: -200, eff: 0.8 }, // reverse generating
  ];
  for (const c of cases) {
    it(`T=${c.t} N·m, ω=${c.w} rad/s, η=${c.eff}`, () => {
      const pMech = c.t * c.w;
      const loss = lossFromEfficiency(pMech, c.eff);
      expect(loss).toBeGreaterThanOrEqual(0);
      const pElec = pMech + loss;
      if (pMech > 0) expect(pMech / pElec).toBeCloseTo(c.eff, 12);
      else expect(-pElec / -pMech).toBeCloseTo(c.eff, 12);
      expect(efficiencyFromLoss(pMech, loss)).toBeCloseTo(c.eff, 12);
    });
  }

  it('is undefined at zero shaft power', () => {
    expect(Number.isNaN(lossFromEfficiency(0, 0.9))).toBe(true);
    expect(efficiencyFromLoss(0, 100)).toBeNull();
  });
});
