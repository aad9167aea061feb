/**
 * Machine-limit part of the wheel-torque limits (DESIGN.md §6): the largest carrier torque each
 * mode can carry at a carrier speed within speed limits, torque envelopes and device capacities,
 * exact per mode (battery limits: envelope.ts). Speeds rad/s, torques N·m.
 * - split: away from Δ = 0 the regime fixes T_s = T_out/c, T_r = T_out·(c − 1)/c, so
 *   |T_out| <= min(c·A_s(ω_s), c/(c − 1)·A_r(ω_r)) with A the envelope magnitude on the side
 *   asked for; both are piecewise linear in ω_s with the split breakpoints, so the maximum is at
 *   a breakpoint or where the two lines cross inside a piece. At Δ = 0, c is free in
 *   [1 + k·η0, 1 + k/η0] and the maximum of min(c·A_s, c/(c − 1)·A_r) is at c = 1 + A_r/A_s
 *   clamped to that range.
 * - held: the one machine's envelope and the brake capacity, at the fixed ratio.
 * - locked: a two-variable linear programme (box of the two envelopes, clutch band
 *   |k·T_s − T_r| <= C·(1 + k)), solved at its vertices.
 */
import { heldDivisor } from '../gearset/planetary.js';
import { wheelFromCarrierTorque } from '../gearset/finalDrive.js';
import { MODES } from './types.js';
import type { Drivetrain } from './drivetrain.js';
import { MODE_LOCKED, MODE_RING_HELD, MODE_SPLIT, MODE_SUN_HELD } from './modeIndex.js';
import { envelopeAt } from './machineEval.js';
import { modeCanTurn } from './modes.js';
import { RANGE, splitBreakpoints, splitRange } from './split.js';

/** Envelope magnitude (N·m, >= 0) of `map` at signed speed w (rad/s) on side σ = ±1. */
function sideEnvelope(dt: Drivetrain, sun: boolean, w: number, sigma: number): number {
  const env = dt.work.env;
  envelopeAt(sun ? dt.sun : dt.ring, w, env, 0);
  return sigma > 0 ? env[0]! : -env[1]!;
}

/** Largest |T_out| (N·m) on side σ in split mode at ω_c (rad/s); −1 when split cannot turn. */
export function splitOutLimit(dt: Drivetrain, wc: number, sigma: number): number {
  if (!splitRange(dt, wc)) return -1;
  const lo = RANGE.lo;
  const hi = RANGE.hi;
  const k = dt.k;
  const base = (1 + k) * wc;
  const cS = dt.cSunDelivers;
  const cR = dt.cRingDelivers;
  const cHigh = sigma > 0 ? cS : cR; // x > ω_c: Δ > 0, the sun delivers when T_out > 0
  const cLow = sigma > 0 ? cR : cS;
  let best = 0;
  const n = splitBreakpoints(dt, wc, lo, hi);
  const bp = dt.work.bp;
  // Envelope magnitudes A_s (sun) and A_r (ring) at each breakpoint, once; c depends on the piece.
  let x = bp[0]!;
  let sa = sideEnvelope(dt, true, x, sigma);
  let ra = sideEnvelope(dt, false, (base - x) / k, sigma);
  if (n === 1 && x !== wc) {
    const c = x > wc ? cHigh : cLow;
    best = Math.min(c * sa, (c / (c - 1)) * ra);
  }
  for (let p = 0; p < n - 1; p++) {
    const a = x;
    x = bp[p + 1]!;
    const sb = sideEnvelope(dt, true, x, sigma);
    const rb = sideEnvelope(dt, false, (base - x) / k, sigma);
    const c = a + x > 2 * wc ? cHigh : cLow;
    const q = c / (c - 1);
    const d1a = c * sa;
    const d2a = q * ra;
    const d1b = c * sb;
    const d2b = q * rb;
    let v = Math.max(Math.min(d1a, d2a), Math.min(d1b, d2b));
    const ea = d1a - d2a;
    const eb = d1b - d2b;
    if ((ea < 0 && eb > 0) || (ea > 0 && eb < 0)) {
      const t = ea / (ea - eb);
      v = Math.max(v, d1a + t * (d1b - d1a));
    }
    if (v > best) best = v;
    sa = sb;
    ra = rb;
  }
  if (wc >= lo && wc <= hi) {
    const A = sideEnvelope(dt, true, wc, sigma);
    const B = sideEnvelope(dt, false, wc, sigma);
    let v = 0;
    if (A > 0 && B > 0) {
      const c = Math.min(cR, Math.max(cS, 1 + B / A));
      v = Math.min(c * A, (c / (c - 1)) * B);
    }
    if (v > best) best = v;
  }
  return best;
}

/** Largest |T_out| (N·m) on side σ in a held mode at ω_c (rad/s); −1 when it cannot turn. */
export function heldOutLimit(dt: Drivetrain, ringHeld: boolean, wc: number, sigma: number): number {
  if (!modeCanTurn(dt, ringHeld ? MODE_RING_HELD : MODE_SUN_HELD, wc)) return -1;
  const k = dt.k;
  const c = heldDivisor(k, dt.eta0, ringHeld, sigma, wc);
  if (ringHeld) {
    const a = sideEnvelope(dt, true, (1 + k) * wc, sigma);
    return Math.min(c * a, (dt.ringBrakeNm * c) / (c - 1));
  }
  const b = sideEnvelope(dt, false, ((1 + k) * wc) / k, sigma);
  return Math.min((b * c) / (c - 1), dt.sunBrakeNm * c);
}

/** Largest |T_out| (N·m) on side σ in locked mode at ω_c (rad/s); −1 when it cannot turn. */
export function lockedOutLimit(dt: Drivetrain, wc: number, sigma: number): number {
  if (!modeCanTurn(dt, MODE_LOCKED, wc)) return -1;
  const env = dt.work.env;
  envelopeAt(dt.sun, wc, env, 0);
  envelopeAt(dt.ring, wc, env, 2);
  // u = σ·T_s, v = σ·T_r; maximise u + v over the box and |k·u − v| <= D.
  const uMax = sigma > 0 ? env[0]! : -env[1]!;
  const uMin = sigma > 0 ? env[1]! : -env[0]!;
  const vMax = sigma > 0 ? env[2]! : -env[3]!;
  const vMin = sigma > 0 ? env[3]! : -env[2]!;
  const k = dt.k;
  const D = dt.clutchNm * (1 + k);
  if (Math.abs(k * uMax - vMax) <= D) return uMax + vMax;
  let best = 0;
  for (const c of [-D, D]) {
    // Along v = k·u + c the objective (1 + k)·u + c rises with u.
    const u = Math.min(uMax, (vMax - c) / k);
    if (u >= Math.max(uMin, (vMin - c) / k)) best = Math.max(best, (1 + k) * u + c);
  }
  return best;
}

/**
 * Largest carrier torque magnitude (N·m) on side σ over the modes in `mask`, machine and device
 * limits only; −1 when no mode can turn at ω_c (rad/s).
 */
export function machineOutLimit(dt: Drivetrain, mask: number, wc: number, sigma: number): number {
  let best = -1;
  for (let m = 0; m < MODES.length; m++) {
    if (!(mask & (1 << m))) continue;
    let v: number;
    if (m === MODE_SPLIT) v = splitOutLimit(dt, wc, sigma);
    else if (m === MODE_LOCKED) v = lockedOutLimit(dt, wc, sigma);
    else v = heldOutLimit(dt, m === MODE_RING_HELD, wc, sigma);
    if (v > best) best = v;
  }
  return best;
}

/** Machine-limit wheel torque magnitude (N·m) on side σ at wheel speed ω_w (rad/s); −1 when nothing turns. */
export function machineWheelLimit(dt: Drivetrain, mask: number, wheelRadS: number, sigma: number): number {
  const wc = dt.fdRatio * wheelRadS;
  const out = machineOutLimit(dt, mask, wc, sigma);
  if (out < 0) return -1;
  return Math.abs(wheelFromCarrierTorque(dt.fdRatio, dt.fdEfficiency, sigma * out, wc));
}
