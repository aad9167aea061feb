/**
 * The split mode's search over its pieces (src/solver/split.ts), best-first with bounds.
 *
 * On the pieces between breakpoints P_batt(ω_s) = T_s·ω_s + T_r·ω_r(ω_s) + loss_s + loss_r + const
 * and every slack are linear. Pieces are grouped in blocks of at most BLOCK_PIECES that never
 * cross a change of power-flow regime (ω_s = ω_c) or of either machine's direction of rotation
 * (ω_s = 0, ω_r = 0). Inside a block each machine's loss is a convex combination of its loss
 * column (the loss at the regime torque on each speed node) over the nodes the block covers, so
 * the smallest and largest column values bound the loss, the ends bound the linear mechanical
 * term, and the envelope's node values bound the torque slacks. Blocks are visited in order of
 * their bound on the objective; a block that cannot reach the best value found so far, or whose
 * torque or battery slacks are negative throughout, is skipped. Ties go to the lowest piece
 * index, so the answer is bit for bit the one a plain left-to-right walk gives.
 *
 * Loss columns are precomputed per regime from the torque-major copy of each map
 * ({@link MachineMap.lossColumnsW}); they are the same numbers the bilinear formula gives.
 * Speeds rad/s, torques N·m, powers W. No allocation.
 */
import { upperIndex, type MachineMap } from '../machine/map.js';
import type { Drivetrain } from './drivetrain.js';
import { MODE_SPLIT } from './modeIndex.js';
import { axisCell, cellWeight, moveCell } from './machineEval.js';
import { bestOnPiece, PIECE } from './piece.js';

/** Most pieces per block. */
export const BLOCK_PIECES = 8;

/**
 * Search switches and counters, for tests and benchmarks: `prune` false visits every block in
 * order (the plain walk); `evaluations` counts piece-end evaluations.
 */
export const SPLIT_SEARCH = { prune: true, evaluations: 0 };

/** Result of {@link bestSplitPiece}: objective (sense·P_batt), sun speed and sun torque of the best setting. */
export const SPLIT_BEST = { f: Number.POSITIVE_INFINITY, x: Number.NaN, ts: Number.NaN };

const CELL = { i: 0, u: 0 };
/** Speed-cell cursors of the sun and ring maps during a sorted walk. */
const CUR = { s: 0, r: 0 };

/**
 * Loss column of `map` at forward torque t (N·m) on speed nodes 0..last: out[o + i] = loss at
 * (speed node i, t), the torque interpolated exactly as the bilinear surface does it.
 */
function lossColumn(map: MachineMap, t: number, out: Float64Array, o: number, last: number): void {
  axisCell(map.torqueNm, t, CELL);
  const nS = map.nSpeed;
  const L = map.lossColumnsW;
  const k0 = CELL.i * nS;
  const k1 = k0 + nS;
  const v = CELL.u;
  for (let i = 0; i <= last; i++) out[o + i] = (1 - v) * L[k0 + i]! + v * L[k1 + i]!;
}

/** Speed nodes the current walk needs: up to which node, and whether reverse speeds occur, per machine. */
const NEED = { sunLast: 0, sunNeg: false, ringLast: 0, ringNeg: false };

function needNodes(dt: Drivetrain, lo: number, hi: number, base: number): void {
  const sun = dt.sun.speedRadS;
  const ring = dt.ring.speedRadS;
  const wrLo = (base - lo) / dt.k;
  const wrHi = (base - hi) / dt.k;
  NEED.sunLast = upperIndex(sun, Math.max(Math.abs(lo), Math.abs(hi))) + 1;
  NEED.sunNeg = lo < 0;
  NEED.ringLast = upperIndex(ring, Math.max(Math.abs(wrLo), Math.abs(wrHi))) + 1;
  NEED.ringNeg = wrHi < 0;
}

/**
 * Columns of one regime at offset `o` of dt.work.cols, on the nodes {@link NEED} names: sun at
 * +T_s and −T_s (reverse speeds use the mirror loss(−ω, τ) = loss(ω, −τ)), then ring at +T_r and −T_r.
 */
function regimeColumns(dt: Drivetrain, ts: number, tr: number, o: number): void {
  const cols = dt.work.cols;
  const nS = dt.sun.nSpeed;
  const nR = dt.ring.nSpeed;
  lossColumn(dt.sun, ts, cols, o, NEED.sunLast);
  if (NEED.sunNeg) lossColumn(dt.sun, -ts, cols, o + nS, NEED.sunLast);
  lossColumn(dt.ring, tr, cols, o + 2 * nS, NEED.ringLast);
  if (NEED.ringNeg) lossColumn(dt.ring, -tr, cols, o + 2 * nS + nR, NEED.ringLast);
}

/**
 * P_batt (W, times the objective sense) and slacks at sun speed x (rad/s) with sun torque ts
 * (N·m) into ev[o..o+6], losses read from the regime's columns at offset co.
 */
function evalSplit(dt: Drivetrain, x: number, base: number, ts: number, tout: number, co: number, ev: Float64Array, o: number): void {
  const sun = dt.sun;
  const ring = dt.ring;
  const cols = dt.work.cols;
  const nS = sun.nSpeed;
  const wr = (base - x) / dt.k;
  const tr = tout - ts;
  SPLIT_SEARCH.evaluations++;
  // sun
  const as = x < 0 ? -x : x;
  let i = (CUR.s = moveCell(sun.speedRadS, CUR.s, as));
  let u = cellWeight(sun.speedRadS, i, as);
  let c = co + (x < 0 ? nS : 0) + i;
  const ls = (1 - u) * cols[c]! + u * cols[c + 1]!;
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
  c = co + 2 * nS + (wr < 0 ? ring.nSpeed : 0) + i;
  const lr = (1 - u) * cols[c]! + u * cols[c + 1]!;
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

/**
 * Extremes over a block for one machine whose signed speed runs from ya to yb (either order, one
 * side of zero inside): loss-column min and max, and the most and least torque the envelope
 * allows in the signed sense of that side (N·m). An end evaluated on the other side (zero speed
 * reads forward; rounding may put an end a hair across) adds its own cell from that side.
 */
const EXT = { lMin: 0, lMax: 0, tMax: 0, tMin: 0 };

function scanCells(map: MachineMap, cols: Float64Array, c: number, i0: number, i1: number, neg: boolean): void {
  const mx = map.maxTorqueNm;
  const mn = map.minTorqueNm;
  for (let i = i0; i <= i1; i++) {
    const l = cols[c + i]!;
    if (l < EXT.lMin) EXT.lMin = l;
    if (l > EXT.lMax) EXT.lMax = l;
    // Reverse side: the signed envelope is the mirror (max = −min forward, min = −max forward).
    const hi = neg ? -mn[i]! : mx[i]!;
    const lo = neg ? -mx[i]! : mn[i]!;
    if (hi > EXT.tMax) EXT.tMax = hi;
    if (lo < EXT.tMin) EXT.tMin = lo;
  }
}

/** Speed-cell cursors of the sun and ring maps while the bounds are computed block by block. */
const BCUR = { s: 0, r: 0 };

function machineExtremes(map: MachineMap, cols: Float64Array, cPos: number, cNeg: number, ya: number, yb: number, sun: boolean): void {
  EXT.lMin = Number.POSITIVE_INFINITY;
  EXT.lMax = Number.NEGATIVE_INFINITY;
  EXT.tMax = Number.NEGATIVE_INFINITY;
  EXT.tMin = Number.POSITIVE_INFINITY;
  const s = map.speedRadS;
  const neg = ya + yb < 0;
  const aa = ya < 0 ? -ya : ya;
  const ab = yb < 0 ? -yb : yb;
  // Cells of both ends by a cursor (blocks come in order, so it moves little).
  let c = sun ? BCUR.s : BCUR.r;
  const ia = (c = moveCell(s, c, aa));
  const ib = (c = moveCell(s, c, ab));
  if (sun) BCUR.s = c;
  else BCUR.r = c;
  scanCells(map, cols, neg ? cNeg : cPos, ia < ib ? ia : ib, (ia < ib ? ib : ia) + 1, neg);
  if (ya < 0 !== neg) scanCells(map, cols, ya < 0 ? cNeg : cPos, ia, ia + 1, ya < 0);
  if (yb < 0 !== neg) scanCells(map, cols, yb < 0 ? cNeg : cPos, ib, ib + 1, yb < 0);
}

/**
 * Best piece of the split walk over breakpoints bp[0..n−1] (n >= 2) at carrier speed ω_c and
 * torque T_out, sun torques tsLo (ω_s < ω_c) and tsHi (ω_s > ω_c). Writes SPLIT_BEST; returns
 * whether any piece is feasible.
 */
export function bestSplitPiece(dt: Drivetrain, wc: number, tout: number, tsLo: number, tsHi: number, n: number): boolean {
  const w = dt.work;
  const bp = w.bp;
  const ev = w.ev;
  const cols = w.cols;
  const k = dt.k;
  const base = (1 + k) * wc;
  const nS = dt.sun.nSpeed;
  const nR = dt.ring.nSpeed;
  const regimeStride = 2 * (nS + nR);
  const sense = w.sense;
  const battery = w.battery;
  const nSlack = battery ? 6 : 4;
  const tolT = dt.tolTorque;
  const tolP = dt.tolPower;
  const constW = dt.auxW + dt.deviceW[MODE_SPLIT]!;

  // Columns of the regimes present (regime 1: ω_s > ω_c).
  const hasLow = bp[0]! + bp[1]! <= 2 * wc;
  const hasHigh = bp[n - 2]! + bp[n - 1]! > 2 * wc;
  needNodes(dt, bp[0]!, bp[n - 1]!, base);
  if (hasLow) regimeColumns(dt, tsLo, tout - tsLo, 0);
  if (hasHigh) regimeColumns(dt, tsHi, tout - tsHi, regimeStride);

  // Blocks: pieces [start, end) with one regime and one direction of rotation per machine.
  const bStart = w.blockStart;
  const bEnd = w.blockEnd;
  const bBound = w.blockBound;
  const order = w.blockOrder;
  let nb = 0;
  let keyPrev = -1;
  for (let p = 0; p < n - 1; p++) {
    const s2 = bp[p]! + bp[p + 1]!;
    const key = (s2 > 2 * wc ? 1 : 0) | (s2 < 0 ? 2 : 0) | (s2 > 2 * base ? 4 : 0);
    if (key !== keyPrev || p - bStart[nb - 1]! >= BLOCK_PIECES) {
      bStart[nb] = p;
      nb++;
      keyPrev = key;
    }
    bEnd[nb - 1] = p + 1;
  }

  // Bounds.
  BCUR.s = upperIndex(dt.sun.speedRadS, Math.abs(bp[0]!));
  BCUR.r = upperIndex(dt.ring.speedRadS, Math.abs((base - bp[0]!) / k));
  for (let b = 0; b < nb; b++) {
    const xa = bp[bStart[b]!]!;
    const xb = bp[bEnd[b]!]!;
    const high = xa + xb > 2 * wc;
    const ts = high ? tsHi : tsLo;
    const tr = tout - ts;
    const co = high ? regimeStride : 0;
    const wra = (base - xa) / k;
    const wrb = (base - xb) / k;
    machineExtremes(dt.sun, cols, co, co + nS, xa, xb, true);
    const sl = EXT.lMin;
    const sL = EXT.lMax;
    const sunOut = EXT.tMax - ts < -tolT || ts - EXT.tMin < -tolT;
    machineExtremes(dt.ring, cols, co + 2 * nS, co + 2 * nS + nR, wra, wrb, false);
    const ringOut = EXT.tMax - tr < -tolT || tr - EXT.tMin < -tolT;
    const ma = ts * xa + tr * wra;
    const mb = ts * xb + tr * wrb;
    const mLo = ma < mb ? ma : mb;
    const mHi = ma < mb ? mb : ma;
    // Rounding margin: the evaluated sums may differ from these bounds in the last bits.
    const margin = 1e-12 * (Math.abs(mLo) + Math.abs(mHi) + sL + EXT.lMax + Math.abs(constW)) + 1e-9;
    const pLo = mLo + sl + EXT.lMin + constW - margin;
    const pHi = mHi + sL + EXT.lMax + constW + margin;
    const batteryOut = battery && (pLo > dt.maxDischargeW + tolP || pHi < -dt.maxChargeW - tolP);
    bBound[b] = !SPLIT_SEARCH.prune ? Number.NEGATIVE_INFINITY : sunOut || ringOut || batteryOut ? Number.POSITIVE_INFINITY : sense > 0 ? pLo : -pHi;
    // Insertion by bound, ties by block index.
    let j = b;
    while (j > 0 && bBound[order[j - 1]!]! > bBound[b]!) {
      order[j] = order[j - 1]!;
      j--;
    }
    order[j] = b;
  }

  let best = Number.POSITIVE_INFINITY;
  let bestPiece = -1;
  let bx = Number.NaN;
  let bts = Number.NaN;
  for (let q = 0; q < nb; q++) {
    const b = order[q]!;
    const bound = bBound[b]!;
    // Sorted by bound: once one cannot reach the best (or is out), none after it can.
    if (bound === Number.POSITIVE_INFINITY || bound > best) break;
    const p0 = bStart[b]!;
    const p1 = bEnd[b]!;
    if (bestPiece >= 0 && bound === best && p0 > bestPiece) continue;
    const xa = bp[p0]!;
    const high = xa + bp[p1]! > 2 * wc;
    const ts = high ? tsHi : tsLo;
    const co = high ? regimeStride : 0;
    CUR.s = upperIndex(dt.sun.speedRadS, Math.abs(xa));
    CUR.r = upperIndex(dt.ring.speedRadS, Math.abs((base - xa) / k));
    let aOff = 0;
    let bOff = 8;
    evalSplit(dt, xa, base, ts, tout, co, ev, aOff);
    for (let p = p0; p < p1; p++) {
      const a = bp[p]!;
      const bb = bp[p + 1]!;
      evalSplit(dt, bb, base, ts, tout, co, ev, bOff);
      if (bestOnPiece(ev, aOff, bOff, nSlack, 4, tolT, tolP) && (PIECE.f < best || (PIECE.f === best && p < bestPiece))) {
        best = PIECE.f;
        bestPiece = p;
        const t = PIECE.t;
        bx = t === 0 ? a : t === 1 ? bb : Math.min(bb, Math.max(a, a + t * (bb - a)));
        bts = ts;
      }
      const s = aOff;
      aOff = bOff;
      bOff = s;
    }
  }
  SPLIT_BEST.f = best;
  SPLIT_BEST.x = bx;
  SPLIT_BEST.ts = bts;
  return bestPiece >= 0;
}

/** P_batt and slacks at a single allowed sun speed x (the range is one point); see {@link evalSplit}. */
export function evalSplitPoint(dt: Drivetrain, wc: number, x: number, ts: number, tout: number): Float64Array {
  const base = (1 + dt.k) * wc;
  needNodes(dt, x, x, base);
  regimeColumns(dt, ts, tout - ts, 0);
  CUR.s = upperIndex(dt.sun.speedRadS, Math.abs(x));
  CUR.r = upperIndex(dt.ring.speedRadS, Math.abs((base - x) / dt.k));
  evalSplit(dt, x, base, ts, tout, 0, dt.work.ev, 0);
  return dt.work.ev;
}
