import { describe, it, expect } from 'vitest';
import { cycleDistanceKm, getBuiltinCycle, listBuiltinCycles } from '../src/vehicle/cycles.js';
import { validateCycleTrace } from '../src/vehicle/schema.js';

const nedc = getBuiltinCycle('nedc');

function part(from: number, to: number) {
  return validateCycleTrace({ timeS: nedc.timeS.slice(from, to + 1), speedKph: nedc.speedKph.slice(from, to + 1) });
}

describe('NEDC reconstructed from UNECE Regulation No. 83, Annex 4', () => {
  it('lasts 1180 s at 1 Hz and tops out at 120 km/h', () => {
    // UNECE R83 Annex 4: four elementary urban cycles of 195 s plus the extra-urban cycle of 400 s
    // (4 × 195 + 400 = 1180 s); highest speed 120 km/h in the extra-urban cycle.
    expect(nedc.timeS[nedc.timeS.length - 1]! - nedc.timeS[0]!).toBe(1180);
    expect(nedc.timeS.length).toBe(1181);
    expect(Math.max(...nedc.speedKph)).toBe(120);
    expect(Math.max(...nedc.speedKph.subarray(0, 781))).toBe(50);
    expect(nedc.gradePct).toBeNull();
  });

  it('covers about 11.0 km', () => {
    // 11.007 km is the commonly quoted NEDC distance (from memory); the reconstruction from the
    // segment tables integrates to 11.013 km. Tolerance ±0.02 km (0.2 %).
    expect(cycleDistanceKm(nedc)).toBeGreaterThan(10.987);
    expect(cycleDistanceKm(nedc)).toBeLessThan(11.027);
  });

  it('matches the published figures of its two parts', () => {
    // UNECE R83, Annex 4, elementary urban cycle, general information: theoretical distance per elementary urban cycle 1.013 km; the
    // segment table integrates to 1.0146 km — tolerance ±0.005 km.
    const urban = part(0, 195);
    expect(cycleDistanceKm(urban)).toBeGreaterThan(1.008);
    expect(cycleDistanceKm(urban)).toBeLessThan(1.018);
    // Extra-urban cycle: 6.955 km (from memory), 400 s; tolerance ±0.005 km.
    const extra = part(780, 1180);
    expect(cycleDistanceKm(extra)).toBeGreaterThan(6.95);
    expect(cycleDistanceKm(extra)).toBeLessThan(6.96);
  });

  it('spends 60 s of each elementary urban cycle idling and repeats it four times', () => {
    // UNECE R83, Annex 4, elementary urban cycle, breakdown by phases: idling 60 s of 195 s.
    let idle = 0;
    for (let k = 0; k < 195; k++) if (nedc.speedKph[k] === 0 && nedc.speedKph[k + 1] === 0) idle++;
    expect(idle).toBe(60);
    for (let r = 1; r < 4; r++) {
      for (let k = 0; k <= 195; k++) expect(nedc.speedKph[195 * r + k]).toBe(nedc.speedKph[k]);
    }
  });

  it('lists the built-in cycles with the invented one labelled as such', () => {
    const list = listBuiltinCycles();
    const n = list.find((c) => c.id === 'nedc')!;
    expect(n.durationS).toBe(1180);
    expect(n.source).toMatch(/Regulation No\. 83/);
    const demo = list.find((c) => c.id === 'demo-delivery')!;
    expect(demo.description).toMatch(/INVENTED/);
    expect(demo.durationS).toBeGreaterThanOrEqual(600);
    expect(demo.durationS).toBeLessThanOrEqual(1200);
    // The demo cycle is itself a valid cycle (accelerations within ±10 m/s² etc.).
    const d = getBuiltinCycle('demo-delivery');
    expect(() => validateCycleTrace({ timeS: d.timeS, speedKph: d.speedKph, gradePct: d.gradePct })).not.toThrow();
  });
});
