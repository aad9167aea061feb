/**
 * Both machines at one speed (split mode at Δ = 0, or the locked set): the carrier torque
 * T_out = T_s + T_r is shared freely within [lo, hi] of sun torque, no mesh loss. At fixed speed
 * the bilinear loss of each map is piecewise linear in torque, with kinks at its torque nodes
 * (T_s = τ_j for the sun, T_out − T_s = τ_j for the ring; mirrored −τ_j at negative speed), so
 * P_batt is piecewise linear in T_s and the exact minimum lies at a kink, an end of the range, or
 * where a battery limit is met. Speeds rad/s, torques N·m, powers W.
 */
import { lossInCell, upperIndex, type MachineMap } from '../machine/map.js';
import { BLOCK_PIECES, BLOCK_SEARCH, batteryOut, insertBlock, objectiveBound, roundingMargin } from './blockSearch.js';
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
  BLOCK_SEARCH.evaluations++;
  ev[o] = dt.work.sense * p;
  ev[o + 1] = dt.maxDischargeW - p;
  ev[o + 2] = p + dt.maxChargeW;
}

/** Result of {@link bestSharePiece}: objective (sense·P_batt) and sun torque of the best setting. */
const SHARE_BEST = { f: Number.POSITIVE_INFINITY, ts: Number.NaN };

/**
 * Loss row of `map` at speed cell (i, u) over torque nodes j0..j1: out[j] = loss at (the speed,
 * torque node j). Bounds only: the interpolation order differs from the bilinear surface's in
 * the last bits, which the rounding margin covers.
 */
function lossRow(map: MachineMap, i: number, u: number, j0: number, j1: number, out: Float64Array): void {
  const nT = map.nTorque;
  const L = map.lossW;
  const k0 = i * nT;
  const k1 = k0 + nT;
  for (let j = j0; j <= j1; j++) out[j] = (1 - u) * L[k0 + j]! + u * L[k1 + j]!;
}

/** Smallest and largest row value over the torque cells holding forward torques ta and tb. */
const RANGE = { min: 0, max: 0 };

function rowRange(axis: Float64Array, row: Float64Array, ta: number, tb: number): void {
  const ja = upperIndex(axis, ta < tb ? ta : tb);
  const jb = upperIndex(axis, ta < tb ? tb : ta) + 1;
  let mn = row[ja]!;
  let mx = mn;
  for (let j = ja + 1; j <= jb; j++) {
    const v = row[j]!;
    if (v < mn) mn = v;
    if (v > mx) mx = v;
  }
  RANGE.min = mn;
  RANGE.max = mx;
}

/**
 * Best piece over the sun-torque kinks tb[0..n−1] (n >= 2) at speed w, best-first over blocks
 * of pieces (blockSearch.ts): on a block P_batt = T_out·ω + loss_s + loss_r + const, each loss
 * within its row's values over the torque nodes the block covers. Writes SHARE_BEST.
 */
function bestSharePiece(dt: Drivetrain, w: number, tout: number, n: number, devW: number): boolean {
  const work = dt.work;
  const tb = work.tb;
  const ev = work.ev;
  const sun = dt.sun;
  const ring = dt.ring;
  const neg = w < 0;
  // Forward torques of the maps over the whole range (reverse speeds read the mirror).
  const fsOf = (ts: number) => (neg ? -ts : ts);
  const frOf = (ts: number) => (neg ? ts - tout : tout - ts);
  const rowS = work.rowS;
  const rowR = work.rowR;
  const lo = tb[0]!;
  const hi = tb[n - 1]!;
  lossRow(sun, SH.is, SH.us, upperIndex(sun.torqueNm, Math.min(fsOf(lo), fsOf(hi))), upperIndex(sun.torqueNm, Math.max(fsOf(lo), fsOf(hi))) + 1, rowS);
  lossRow(ring, SH.ir, SH.ur, upperIndex(ring.torqueNm, Math.min(frOf(lo), frOf(hi))), upperIndex(ring.torqueNm, Math.max(frOf(lo), frOf(hi))) + 1, rowR);
  const constW = tout * w + dt.auxW + devW;
  const sense = work.sense;
  const battery = work.battery;
  const tolP = dt.tolPower;
  const nSlack = battery ? 2 : 0;
  const bStart = work.blockStart;
  const bEnd = work.blockEnd;
  const bBound = work.blockBound;
  const order = work.blockOrder;
  let nb = 0;
  for (let p = 0; p < n - 1; p += BLOCK_PIECES) {
    const e = Math.min(n - 1, p + BLOCK_PIECES);
    bStart[nb] = p;
    bEnd[nb] = e;
    const ta = tb[p]!;
    const tz = tb[e]!;
    rowRange(sun.torqueNm, rowS, fsOf(ta), fsOf(tz));
    const sMin = RANGE.min;
    const sMax = RANGE.max;
    rowRange(ring.torqueNm, rowR, frOf(ta), frOf(tz));
    const margin = roundingMargin(Math.abs(constW) + Math.abs(sMin) + Math.abs(sMax) + Math.abs(RANGE.min) + Math.abs(RANGE.max));
    const pLo = constW + sMin + RANGE.min - margin;
    const pHi = constW + sMax + RANGE.max + margin;
    bBound[nb] = objectiveBound(pLo, pHi, sense, battery && batteryOut(pLo, pHi, dt.maxDischargeW, dt.maxChargeW, tolP));
    insertBlock(order, bBound, nb);
    nb++;
  }

  let best = Number.POSITIVE_INFINITY;
  let bestPiece = -1;
  let bestTs = Number.NaN;
  for (let q = 0; q < nb; q++) {
    const b = order[q]!;
    const bound = bBound[b]!;
    // Sorted by bound: once one cannot reach the best (or is out), none after it can.
    if (bound === Number.POSITIVE_INFINITY || bound > best) break;
    const p0 = bStart[b]!;
    const p1 = bEnd[b]!;
    if (bestPiece >= 0 && bound === best && p0 > bestPiece) continue;
    const t0 = tb[p0]!;
    SH.cs = upperIndex(sun.torqueNm, fsOf(t0));
    SH.cr = upperIndex(ring.torqueNm, frOf(t0));
    let aOff = 0;
    let bOff = 8;
    evalShare(dt, w, tout, t0, devW, ev, aOff);
    for (let p = p0; p < p1; p++) {
      const a = tb[p]!;
      const z = tb[p + 1]!;
      evalShare(dt, w, tout, z, devW, ev, bOff);
      if (bestOnPiece(ev, aOff, bOff, nSlack, 0, 0, tolP) && (PIECE.f < best || (PIECE.f === best && p < bestPiece))) {
        best = PIECE.f;
        bestPiece = p;
        const t = PIECE.t;
        bestTs = t === 0 ? a : t === 1 ? z : a + t * (z - a);
      }
      const s = aOff;
      aOff = bOff;
      bOff = s;
    }
  }
  SHARE_BEST.f = best;
  SHARE_BEST.ts = bestTs;
  return bestPiece >= 0;
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
  const ev = dt.work.ev;
  const tolP = dt.tolPower;
  const sense = dt.work.sense;
  const nSlack = dt.work.battery ? 2 : 0;
  let best = Number.POSITIVE_INFINITY;
  let bestTs = Number.NaN;
  if (n === 1) {
    SH.cs = upperIndex(dt.sun.torqueNm, w < 0 ? -lo : lo);
    SH.cr = upperIndex(dt.ring.torqueNm, w < 0 ? lo - tout : tout - lo);
    evalShare(dt, w, tout, lo, devW, ev, 0);
    if (bestOnPiece(ev, 0, 0, nSlack, 0, 0, tolP)) {
      best = ev[0]!;
      bestTs = lo;
    }
  } else if (bestSharePiece(dt, w, tout, n, devW)) {
    best = SHARE_BEST.f;
    bestTs = SHARE_BEST.ts;
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
