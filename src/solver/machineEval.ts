/**
 * Hot-path helpers on a canonical machine map (src/machine/map.ts): the torque envelope at a
 * signed speed, both bounds from one search, with the reverse mirror
 * maxTorque(−ω) = −minTorque(ω). Speeds in rad/s, torques in N·m. No allocation.
 */
import { upperIndex, type MachineMap } from '../machine/map.js';

/**
 * Writes the largest and smallest torque (N·m) at signed speed ω (rad/s) to out[o], out[o+1].
 * The speed is clamped to the grid; the caller checks the speed limit.
 */
export function envelopeAt(map: MachineMap, omega: number, out: Float64Array, o: number): void {
  const w = omega < 0 ? -omega : omega;
  const s = map.speedRadS;
  const n = map.nSpeed;
  const mx = map.maxTorqueNm;
  const mn = map.minTorqueNm;
  let hi: number;
  let lo: number;
  if (w >= s[n - 1]!) {
    hi = mx[n - 1]!;
    lo = mn[n - 1]!;
  } else {
    const i = upperIndex(s, w);
    const u = (w - s[i]!) / (s[i + 1]! - s[i]!);
    hi = mx[i]! + u * (mx[i + 1]! - mx[i]!);
    lo = mn[i]! + u * (mn[i + 1]! - mn[i]!);
  }
  if (omega >= 0) {
    out[o] = hi;
    out[o + 1] = lo;
  } else {
    out[o] = -lo;
    out[o + 1] = -hi;
  }
}

/** First index i with xs[i] > x (xs ascending); xs.length when none. */
export function firstAbove(xs: Float64Array, x: number): number {
  let lo = 0;
  let hi = xs.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (xs[mid]! > x) hi = mid;
    else lo = mid + 1;
  }
  return lo;
}

/** Last index i with xs[i] < x (xs ascending); −1 when none. */
export function lastBelow(xs: Float64Array, x: number): number {
  let lo = 0;
  let hi = xs.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (xs[mid]! < x) lo = mid + 1;
    else hi = mid;
  }
  return lo - 1;
}

/** Cell of a grid axis found by {@link axisCell}: index i (xs[i] <= x < xs[i+1]) and weight u ∈ [0, 1]. */
export interface AxisCell {
  i: number;
  u: number;
}

/** Finds the cell of x on an ascending axis (clamped to the ends), written to `out`. */
export function axisCell(xs: Float64Array, x: number, out: AxisCell): void {
  const i = upperIndex(xs, x);
  let u = (x - xs[i]!) / (xs[i + 1]! - xs[i]!);
  if (u < 0) u = 0;
  else if (u > 1) u = 1;
  out.i = i;
  out.u = u;
}

/**
 * Moves cell index c on an ascending axis to the cell containing x (xs[c] <= x < xs[c+1],
 * clamped to the end cells). Amortised O(1) when successive x move steadily, as in a sorted walk.
 */
export function moveCell(xs: Float64Array, c: number, x: number): number {
  const last = xs.length - 2;
  while (c < last && xs[c + 1]! <= x) c++;
  while (c > 0 && xs[c]! > x) c--;
  return c;
}

/** Weight of x in cell c of an ascending axis, clamped to [0, 1]. */
export function cellWeight(xs: Float64Array, c: number, x: number): number {
  const u = (x - xs[c]!) / (xs[c + 1]! - xs[c]!);
  return u < 0 ? 0 : u > 1 ? 1 : u;
}
