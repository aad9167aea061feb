/**
 * Split mode (DESIGN.md §5): both machines energised, free variable the sun speed ω_s; the ring
 * follows from the Willis equation ω_r = ((1 + k)·ω_c − ω_s)/k. Away from Δ = ω_s − ω_c = 0 the
 * torques are fixed by the power-flow regime (src/gearset/planetary.ts), so with bilinear maps
 * P_batt and every constraint slack are piecewise linear in ω_s. Breakpoints: the sun grid
 * speeds ±n_i (0 among them), the ring grid speeds mapped through the kinematics
 * (1 + k)·ω_c ∓ k·n_j (ring zero speed among them), Δ = 0, and the ends of the allowed speed
 * range (speed limits, reverse permission). On each piece the feasible part is an interval (all
 * slacks linear; its ends are the roots of envelope and battery slacks) and the minimum sits at
 * one of its ends, so enumerating pieces gives the exact global optimum. At Δ = 0 the sun torque
 * is free within the static-friction band, solved exactly by {@link solveShare}.
 */
import { sunTorqueBand } from '../gearset/planetary.js';
import type { Drivetrain } from './drivetrain.js';
import { MODE_SPLIT } from './modeIndex.js';
import { axisCell, cellWeight, envelopeAt, firstAbove, lastBelow, moveCell } from './machineEval.js';
import { lossInCell, upperIndex } from '../machine/map.js';
import { bestOnPiece, PIECE } from './piece.js';
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

/**
 * Torque cells of the regime torques, found once per regime: sun at +T_s (forward speed) and
 * −T_s (reverse speed, by the mirror), ring likewise.
 */
const SP = { i: 0, u: 0 };
const SN = { i: 0, u: 0 };
const RP = { i: 0, u: 0 };
const RN = { i: 0, u: 0 };
/** Speed-cell cursors of the sun and ring maps during a sorted walk. */
const CUR = { s: 0, r: 0 };

function setRegime(dt: Drivetrain, ts: number, tr: number): void {
  axisCell(dt.sun.torqueNm, ts, SP);
  axisCell(dt.sun.torqueNm, -ts, SN);
  axisCell(dt.ring.torqueNm, tr, RP);
  axisCell(dt.ring.torqueNm, -tr, RN);
}

/**
 * P_batt (W) and slacks at sun speed x (rad/s) with sun torque ts (N·m), into ev[o..o+6]; the
 * regime's torque cells must be set. One speed-cell search per machine serves loss and envelope.
 */
function evalSplit(dt: Drivetrain, x: number, base: number, ts: number, tout: number, ev: Float64Array, o: number): void {
  const sun = dt.sun;
  const ring = dt.ring;
  const wr = (base - x) / dt.k;
  const tr = tout - ts;
  // sun
  const as = x < 0 ? -x : x;
  let i = (CUR.s = moveCell(sun.speedRadS, CUR.s, as));
  let u = cellWeight(sun.speedRadS, i, as);
  let tc = x < 0 ? SN : SP;
  const ls = lossInCell(sun, i, u, tc.i, tc.u);
  let mx = sun.maxTorqueNm;
  let mn = sun.minTorqueNm;
  let hi = mx[i]! + u * (mx[i + 1]! - mx[i]!);
  let lo = mn[i]! + u * (mn[i + 1]! - mn[i]!);
  const sMax = x < 0 ? -lo : hi;
  const sMin = x < 0 ? -hi : lo;
  // ring
  const ar = wr < 0 ? -wr : wr;
  i = CUR.r = moveCell(ring.speedRadS, CUR.r, ar);
  u = cellWeight(ring.speedRadS, i, ar);
  tc = wr < 0 ? RN : RP;
  const lr = lossInCell(ring, i, u, tc.i, tc.u);
  mx = ring.maxTorqueNm;
  mn = ring.minTorqueNm;
  hi = mx[i]! + u * (mx[i + 1]! - mx[i]!);
  lo = mn[i]! + u * (mn[i + 1]! - mn[i]!);
  const rMax = wr < 0 ? -lo : hi;
  const rMin = wr < 0 ? -hi : lo;
  const p = ts * x + tr * wr + ls + lr + dt.auxW + dt.deviceW[MODE_SPLIT]!;
  ev[o] = dt.work.sense * p;
  ev[o + 1] = sMax - ts;
  ev[o + 2] = ts - sMin;
  ev[o + 3] = rMax - tr;
  ev[o + 4] = tr - rMin;
  ev[o + 5] = dt.maxDischargeW - p;
  ev[o + 6] = p + dt.maxChargeW;
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
  const bp = dt.work.bp;
  const ev = dt.work.ev;
  CUR.s = upperIndex(dt.sun.speedRadS, Math.abs(lo));
  CUR.r = upperIndex(dt.ring.speedRadS, Math.abs((base - lo) / k));
  const tolT = dt.tolTorque;
  const tolP = dt.tolPower;
  const sense = dt.work.sense;
  const nSlack = dt.work.battery ? 6 : 4;
  let best = Number.POSITIVE_INFINITY;
  let bx = Number.NaN;
  let bts = Number.NaN;
  if (n === 1) {
    const x = lo;
    if (x !== wc || tout === 0) {
      const ts = x > wc ? tsHi : tsLo;
      setRegime(dt, ts, tout - ts);
      evalSplit(dt, x, base, ts, tout, ev, 0);
      if (bestOnPiece(ev, 0, 0, nSlack, 4, tolT, tolP)) {
        best = ev[0]!;
        bx = x;
        bts = ts;
      }
    }
  } else {
    let aOff = 0;
    let bOff = 8;
    let prevHigh = -1;
    for (let p = 0; p < n - 1; p++) {
      const a = bp[p]!;
      const b = bp[p + 1]!;
      const high = a + b > 2 * wc ? 1 : 0;
      const ts = high ? tsHi : tsLo;
      if (high !== prevHigh) {
        setRegime(dt, ts, tout - ts);
        evalSplit(dt, a, base, ts, tout, ev, aOff);
      }
      evalSplit(dt, b, base, ts, tout, ev, bOff);
      prevHigh = high;
      if (bestOnPiece(ev, aOff, bOff, nSlack, 4, tolT, tolP) && PIECE.f < best) {
        best = PIECE.f;
        const t = PIECE.t;
        bx = t === 0 ? a : t === 1 ? b : Math.min(b, Math.max(a, a + t * (b - a)));
        bts = ts;
      }
      const s = aOff;
      aOff = bOff;
      bOff = s;
    }
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
