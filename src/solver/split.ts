/**
 * Split mode (DESIGN.md §5): both machines energised, free variable the sun speed ω_s; the ring
 * follows from the Willis equation ω_r = ((1 + k)·ω_c − ω_s)/k. Away from Δ = ω_s − ω_c = 0 the
 * torques are fixed by the power-flow regime (src/gearset/planetary.ts), so with bilinear maps
 * P_batt and every constraint slack are piecewise linear in ω_s. Breakpoints: the sun grid
 * speeds ±n_i (0 among them), the ring grid speeds mapped through the kinematics
 * (1 + k)·ω_c ∓ k·n_j (ring zero speed among them), Δ = 0, and the ends of the allowed speed
 * range (speed limits, reverse permission). On each piece the feasible part is an interval (all
 * slacks linear; its ends are the roots of envelope and battery slacks) and the minimum sits at
 * one of its ends, so enumerating pieces gives the exact global optimum; the enumeration is a
 * best-first search with bounds that skips blocks of pieces which cannot win (src/solver/splitWalk.ts),
 * with the plain walk's answer to the last bit. At Δ = 0 the sun torque is free within the
 * static-friction band, solved exactly by {@link solveShare}.
 */
import { sunTorqueBand } from '../gearset/planetary.js';
import type { Drivetrain } from './drivetrain.js';
import { MODE_SPLIT } from './modeIndex.js';
import { envelopeAt, firstAbove, lastBelow } from './machineEval.js';
import { bestOnPiece } from './piece.js';
import { bestSplitPiece, evalSplitPoint, SPLIT_BEST } from './splitWalk.js';
import { solveShare } from './torqueShare.js';
import type { Candidate } from './work.js';

/** Allowed sun-speed range in split mode at carrier speed ω_c (rad/s), written to RANGE. */
export const RANGE = { lo: 0, hi: 0 };

/**
 * Sun speeds (rad/s) at which both machines are within their speed limits and reverse
 * permission. Returns false when there is none.
 */
export function splitRange(dt: Drivetrain, wc: number): boolean {
  const { sun, ring, k } = dt;
  const S = sun.maxSpeedRadS;
  const R = ring.maxSpeedRadS;
  const base = (1 + k) * wc;
  if (!Number.isFinite(base)) return false;
  let lo = Math.max(sun.reverse ? -S : 0, base - k * R);
  let hi = Math.min(S, base - k * (ring.reverse ? -R : 0));
  if (!(lo <= hi)) {
    if (!(lo - hi <= 1e-12 * (1 + Math.abs(base) + S))) return false;
    lo = hi = 0.5 * (lo + hi);
  }
  RANGE.lo = lo;
  RANGE.hi = hi;
  return true;
}

/**
 * Sorted, distinct breakpoints in [lo, hi] (rad/s of sun speed) into dt.work.bp; returns the
 * count (the ends included).
 */
export function splitBreakpoints(dt: Drivetrain, wc: number, lo: number, hi: number): number {
  const bp = dt.work.bp;
  const sN = dt.sunSpeedNodes;
  const rN = dt.ringSpeedNodes;
  const k = dt.k;
  const base = (1 + k) * wc;
  let n = 0;
  bp[n++] = lo;
  let i = firstAbove(sN, lo);
  // ring node j maps to x = base − k·rN[j], ascending as j falls; start at the first x > lo.
  let j = lastBelow(rN, (base - lo) / k);
  while (j >= 0 && base - k * rN[j]! <= lo) j--;
  let wcPending = wc > lo && wc < hi;
  for (;;) {
    const xs = i < sN.length ? sN[i]! : Number.POSITIVE_INFINITY;
    const xr = j >= 0 ? base - k * rN[j]! : Number.POSITIVE_INFINITY;
    let x = xs < xr ? xs : xr;
    if (wcPending && wc <= x) {
      x = wc;
      wcPending = false;
    } else {
      if (xs <= x) i++;
      if (xr <= x) j--;
    }
    if (!(x < hi)) break;
    if (x > bp[n - 1]!) bp[n++] = x;
  }
  if (hi > bp[n - 1]!) bp[n++] = hi;
  return n;
}

/** Sun-torque range at Δ = 0 (N·m): the friction band intersected with both envelopes at ω_c. */
const BAND = new Float64Array(2);

function bandRange(dt: Drivetrain, wc: number, tout: number): void {
  sunTorqueBand(dt.k, dt.eta0, tout, BAND);
  const env = dt.work.env;
  envelopeAt(dt.sun, wc, env, 0);
  envelopeAt(dt.ring, wc, env, 2);
  BAND[0] = Math.max(BAND[0]!, env[1]!, tout - env[2]!);
  BAND[1] = Math.min(BAND[1]!, env[0]!, tout - env[3]!);
}

/**
 * Exact minimum of P_batt in split mode at carrier speed ω_c (rad/s) and carrier torque T_out
 * (N·m). Writes the best setting to `out`; returns whether any setting is feasible.
 */
export function solveSplit(dt: Drivetrain, wc: number, tout: number, out: Candidate): boolean {
  out.ok = false;
  if (!splitRange(dt, wc)) return false;
  const lo = RANGE.lo;
  const hi = RANGE.hi;
  const k = dt.k;
  const base = (1 + k) * wc;
  // Regime torques: x > ω_c (Δ > 0): the sun delivers when T_out > 0; x < ω_c: when T_out < 0.
  const tsHi = tout / (tout > 0 ? dt.cSunDelivers : dt.cRingDelivers);
  const tsLo = tout / (tout < 0 ? dt.cSunDelivers : dt.cRingDelivers);
  const n = splitBreakpoints(dt, wc, lo, hi);
  const sense = dt.work.sense;
  let best = Number.POSITIVE_INFINITY;
  let bx = Number.NaN;
  let bts = Number.NaN;
  if (n === 1) {
    const x = lo;
    if (x !== wc || tout === 0) {
      const ts = x > wc ? tsHi : tsLo;
      const ev = evalSplitPoint(dt, wc, x, ts, tout);
      if (bestOnPiece(ev, 0, 0, dt.work.battery ? 6 : 4, 4, dt.tolTorque, dt.tolPower)) {
        best = ev[0]!;
        bx = x;
        bts = ts;
      }
    }
  } else if (bestSplitPiece(dt, wc, tout, tsLo, tsHi, n)) {
    best = SPLIT_BEST.f;
    bx = SPLIT_BEST.x;
    bts = SPLIT_BEST.ts;
  }
  if (best < Number.POSITIVE_INFINITY) {
    out.ok = true;
    out.p = sense * best;
    out.ws = bx;
    out.wr = (base - bx) / k;
    out.ts = bts;
    out.tr = tout - bts;
  }
  // Δ = 0: all members turn together, the sun torque is free within the friction band.
  if (tout !== 0 && wc >= lo && wc <= hi) {
    bandRange(dt, wc, tout);
    const spare = dt.work.band;
    if (solveShare(dt, wc, tout, BAND[0]!, BAND[1]!, dt.deviceW[MODE_SPLIT]!, spare) && sense * spare.p < best) {
      out.ok = true;
      out.p = spare.p;
      out.ws = wc;
      out.wr = wc;
      out.ts = spare.ts;
      out.tr = spare.tr;
    }
  }
  return out.ok;
}
