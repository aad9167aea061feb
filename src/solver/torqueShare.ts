/**
 * Both machines at one speed (split mode at Δ = 0, or the locked set): the carrier torque
 * T_out = T_s + T_r is shared freely within [lo, hi] of sun torque, no mesh loss. At fixed speed
 * the bilinear loss of each map is piecewise linear in torque, with kinks at its torque nodes
 * (T_s = τ_j for the sun, T_out − T_s = τ_j for the ring; mirrored −τ_j at negative speed), so
 * P_batt is piecewise linear in T_s and the exact minimum lies at a kink, an end of the range, or
 * where a battery limit is met. Speeds rad/s, torques N·m, powers W.
 */
import { lossInCell, upperIndex } from '../machine/map.js';
import { axisCell, cellWeight, moveCell } from './machineEval.js';
import type { Drivetrain } from './drivetrain.js';
import { bestOnPiece, PIECE } from './piece.js';
import type { Candidate } from './work.js';

/** Speed cells (fixed during one call) and torque-cell cursors of the two maps. */
const SH = { is: 0, us: 0, ir: 0, ur: 0, cs: 0, cr: 0 };
const CELL = { i: 0, u: 0 };

function evalShare(dt: Drivetrain, w: number, tout: number, ts: number, devW: number, ev: Float64Array, o: number): void {
  const sun = dt.sun;
  const ring = dt.ring;
  // Forward-map torques (reverse speeds use the mirror loss(−ω, τ) = loss(ω, −τ)).
  const fs = w < 0 ? -ts : ts;
  const fr = w < 0 ? ts - tout : tout - ts;
  const cs = (SH.cs = moveCell(sun.torqueNm, SH.cs, fs));
  const cr = (SH.cr = moveCell(ring.torqueNm, SH.cr, fr));
  const ls = lossInCell(sun, SH.is, SH.us, cs, cellWeight(sun.torqueNm, cs, fs));
  const lr = lossInCell(ring, SH.ir, SH.ur, cr, cellWeight(ring.torqueNm, cr, fr));
  const p = tout * w + ls + lr + dt.auxW + devW;
  ev[o] = dt.work.sense * p;
  ev[o + 1] = dt.maxDischargeW - p;
  ev[o + 2] = p + dt.maxChargeW;
}

/**
 * Minimum battery power over sun torque T_s ∈ [lo, hi] (N·m) with both machines at speed w
 * (rad/s; the caller has checked both speed limits and folded the envelopes into [lo, hi]).
 * Writes the best setting to `out` and returns whether one is feasible.
 */
export function solveShare(dt: Drivetrain, w: number, tout: number, lo: number, hi: number, devW: number, out: Candidate): boolean {
  if (lo > hi) {
    if (lo - hi > dt.tolTorque) return false;
    const mid = 0.5 * (lo + hi);
    lo = mid;
    hi = mid;
  }
  const tb = dt.work.tb;
  const sN = w >= 0 ? dt.sunTorqueNodes : dt.sunTorqueMirror;
  const rN = w >= 0 ? dt.ringTorqueNodes : dt.ringTorqueMirror;
  // Merge ascending sun kinks with ring kinks T_s = tout − rN[j] (ascending as j falls).
  let n = 0;
  tb[n++] = lo;
  let i = 0;
  while (i < sN.length && sN[i]! <= lo) i++;
  let j = rN.length - 1;
  while (j >= 0 && tout - rN[j]! <= lo) j--;
  for (;;) {
    const xs = i < sN.length ? sN[i]! : Number.POSITIVE_INFINITY;
    const xr = j >= 0 ? tout - rN[j]! : Number.POSITIVE_INFINITY;
    const x = xs < xr ? xs : xr;
    if (!(x < hi)) break;
    if (xs <= xr) i++;
    if (xr <= xs) j--;
    if (x > tb[n - 1]!) tb[n++] = x;
  }
  if (hi > tb[n - 1]!) tb[n++] = hi;

  const aw = w < 0 ? -w : w;
  axisCell(dt.sun.speedRadS, aw, CELL);
  SH.is = CELL.i;
  SH.us = CELL.u;
  axisCell(dt.ring.speedRadS, aw, CELL);
  SH.ir = CELL.i;
  SH.ur = CELL.u;
  SH.cs = upperIndex(dt.sun.torqueNm, w < 0 ? -lo : lo);
  SH.cr = upperIndex(dt.ring.torqueNm, w < 0 ? lo - tout : tout - lo);
  const ev = dt.work.ev;
  const tolP = dt.tolPower;
  const sense = dt.work.sense;
  const nSlack = dt.work.battery ? 2 : 0;
  let best = Number.POSITIVE_INFINITY;
  let bestTs = Number.NaN;
  if (n === 1) {
    evalShare(dt, w, tout, lo, devW, ev, 0);
    if (bestOnPiece(ev, 0, 0, nSlack, 0, 0, tolP)) {
      best = ev[0]!;
      bestTs = lo;
    }
  } else {
    let aOff = 0;
    let bOff = 8;
    evalShare(dt, w, tout, tb[0]!, devW, ev, aOff);
    for (let p = 0; p < n - 1; p++) {
      const a = tb[p]!;
      const b = tb[p + 1]!;
      evalShare(dt, w, tout, b, devW, ev, bOff);
      if (bestOnPiece(ev, aOff, bOff, nSlack, 0, 0, tolP) && PIECE.f < best) {
        best = PIECE.f;
        const t = PIECE.t;
        bestTs = t === 0 ? a : t === 1 ? b : a + t * (b - a);
      }
      const s = aOff;
      aOff = bOff;
      bOff = s;
    }
  }
  if (!(best < Number.POSITIVE_INFINITY)) return false;
  out.ok = true;
  out.p = sense * best;
  out.ws = w;
  out.wr = w;
  out.ts = bestTs;
  out.tr = tout - bestTs;
  return true;
}
