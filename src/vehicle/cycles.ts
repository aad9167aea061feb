/**
 * Built-in drive cycles as 1 Hz speed samples built from segment tables (each segment: duration
 * in s, speed in km/h at its end — speed changes linearly within it — and the road grade in %).
 */
import type { Cycle } from './schema.js';

/** [duration s, end speed km/h, grade % over the segment]. */
type Segment = readonly [number, number, number?];

/**
 * Elementary urban cycle (part one) of the NEDC, UNECE Regulation No. 83, Annex 4, Appendix 1,
 * Table 1: 195 s of idling, accelerations, gear changes (speed held, or falling 35 → 32 km/h in
 * the one during deceleration), steady speeds and decelerations.
 */
const NEDC_URBAN: readonly Segment[] = [
  [11, 0], [4, 15], [8, 15], [2, 10], [3, 0],
  [21, 0], [5, 15], [2, 15], [5, 32], [24, 32], [8, 10], [3, 0],
  [21, 0], [5, 15], [2, 15], [9, 35], [2, 35], [8, 50], [12, 50], [8, 35], [13, 35], [2, 32], [7, 10], [3, 0],
  [7, 0],
];

/** Extra-urban cycle (part two) of the NEDC, UNECE Regulation No. 83, Annex 4, Appendix 1, Table 2: 400 s. */
const NEDC_EXTRA_URBAN: readonly Segment[] = [
  [20, 0], [5, 15], [2, 15], [9, 35], [2, 35], [8, 50], [2, 50], [13, 70], [50, 70], [8, 50], [69, 50],
  [13, 70], [50, 70], [35, 100], [30, 100], [20, 120], [10, 120], [16, 80], [8, 50], [10, 0], [20, 0],
];

/**
 * demo-delivery: an invented scenario of our own, not a measured or regulated cycle. A light
 * delivery van leaves the depot, makes four drops in town, climbs a short 6 % hill with a stop and
 * restart on it, descends the far side at -6 %, and returns on a 70 km/h ring road.
 */
const DEMO_DELIVERY: readonly Segment[] = [
  [10, 0], [8, 30], [40, 30], [6, 0], [45, 0],
  [12, 50], [60, 50], [6, 20], [10, 20], [8, 50], [30, 50], [10, 0], [60, 0],
  [10, 40], [5, 40, 3], [55, 40, 6], [8, 0, 6], [25, 0, 6], [10, 30, 6], [20, 30, 6], [5, 30, 3], [10, 30], [6, 0], [40, 0],
  [10, 40], [5, 40, -3], [65, 40, -6], [5, 40, -3], [8, 0], [50, 0],
  [20, 70], [120, 70], [15, 0], [20, 0],
];

function fromSegments(name: string, segments: readonly Segment[], repeat = 1, tail: readonly Segment[] = []): Cycle {
  const all: Segment[] = [];
  for (let r = 0; r < repeat; r++) all.push(...segments);
  all.push(...tail);
  const total = all.reduce((s, seg) => s + seg[0], 0);
  const timeS = new Float64Array(total + 1);
  const speedKph = new Float64Array(total + 1);
  const gradePct = new Float64Array(total + 1);
  let t = 0;
  let v = 0;
  for (const [dur, end, grade = 0] of all) {
    for (let s = 1; s <= dur; s++) {
      timeS[t + s] = t + s;
      speedKph[t + s] = v + ((end - v) * s) / dur;
      gradePct[t + s] = grade;
    }
    t += dur;
    v = end;
  }
  const flat = gradePct.every((g) => g === 0);
  return Object.freeze({ name, timeS, speedKph, gradePct: flat ? null : gradePct });
}

export const BUILTIN_CYCLE_IDS = ['nedc', 'demo-delivery'] as const;
export type BuiltinCycleId = (typeof BUILTIN_CYCLE_IDS)[number];

const DESCRIPTIONS: Record<BuiltinCycleId, { description: string; source: string; build: () => Cycle }> = {
  nedc: {
    description: 'New European Driving Cycle: the elementary urban cycle (195 s) four times, then the extra-urban cycle (400 s); 1 Hz, flat road',
    source: 'UNECE Regulation No. 83, Annex 4, Appendix 1 (segment tables), reconstructed as 1 Hz samples',
    build: () => fromSegments('nedc', NEDC_URBAN, 4, NEDC_EXTRA_URBAN),
  },
  'demo-delivery': {
    description:
      'INVENTED demo cycle (a scenario of our own, not a measured or regulated cycle): a light delivery van with four stops in town, a short 6 % climb with a hill stop, a -6 % descent and a 70 km/h ring road; 1 Hz',
    source: 'invented for demonstration',
    build: () => fromSegments('demo-delivery', DEMO_DELIVERY),
  },
};

const cache = new Map<BuiltinCycleId, Cycle>();

/** A built-in cycle by id (built once, then shared; the arrays must not be modified). */
export function getBuiltinCycle(id: BuiltinCycleId): Cycle {
  let c = cache.get(id);
  if (!c) {
    c = DESCRIPTIONS[id].build();
    cache.set(id, c);
  }
  return c;
}

/** Distance of a cycle by the trapezoid rule, km. */
export function cycleDistanceKm(c: Cycle): number {
  let m = 0;
  for (let k = 0; k + 1 < c.timeS.length; k++) {
    m += ((c.speedKph[k]! + c.speedKph[k + 1]!) / 7.2) * (c.timeS[k + 1]! - c.timeS[k]!);
  }
  return m / 1000;
}

export interface BuiltinCycleInfo {
  id: BuiltinCycleId;
  description: string;
  durationS: number;
  distanceKm: number;
  maxSpeedKph: number;
  source: string;
}

/** Id, description, duration, distance and source of every built-in cycle. */
export function listBuiltinCycles(): BuiltinCycleInfo[] {
  return BUILTIN_CYCLE_IDS.map((id) => {
    const c = getBuiltinCycle(id);
    return {
      id,
      description: DESCRIPTIONS[id].description,
      durationS: c.timeS[c.timeS.length - 1]! - c.timeS[0]!,
      distanceKm: cycleDistanceKm(c),
      maxSpeedKph: Math.max(...c.speedKph),
      source: DESCRIPTIONS[id].source,
    };
  });
}
