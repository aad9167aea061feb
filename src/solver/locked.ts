/**
 * Locked mode (DESIGN.md §5): a lock-up clutch joins sun and ring, the set turns as a block
 * (ω_s = ω_r = ω_c), no mesh loss; the free variable is the share of T_out carried by the sun.
 *
 * Clutch torque (our definition): the clutch joins sun and ring; the gear teeth carry the
 * lossless share T_s = T_out·Zs/(Zs + Zr) = T_out/(1 + k) and the clutch carries the rest, so it
 * transmits |T_s − T_out/(1 + k)| (moment balance on the sun and ring members with T_r,teeth =
 * k·T_s,teeth). The friction band that would let the teeth carry part of it is ignored, which errs
 * on the safe side. Speeds rad/s, torques N·m, powers W.
 */
import { speedAllowed } from '../machine/map.js';
import type { Drivetrain } from './drivetrain.js';
import { MODE_LOCKED } from './modeIndex.js';
import { envelopeAt } from './machineEval.js';
import { solveShare } from './torqueShare.js';
import type { Candidate } from './work.js';

/** Torque (N·m) the lock-up clutch transmits for sun torque T_s and carrier torque T_out. */
export function clutchTorque(k: number, ts: number, tout: number): number {
  return Math.abs(ts - tout / (1 + k));
}

/** Whether the locked set can turn at carrier speed ω_c (rad/s). */
export function lockedCanTurn(dt: Drivetrain, wc: number): boolean {
  return speedAllowed(dt.sun, wc) && speedAllowed(dt.ring, wc);
}

/** Exact minimum of P_batt in locked mode at ω_c (rad/s), T_out (N·m); writes `out`. */
export function solveLocked(dt: Drivetrain, wc: number, tout: number, out: Candidate): boolean {
  out.ok = false;
  if (!lockedCanTurn(dt, wc)) return false;
  const env = dt.work.env;
  envelopeAt(dt.sun, wc, env, 0);
  envelopeAt(dt.ring, wc, env, 2);
  const share = tout / (1 + dt.k);
  const lo = Math.max(env[1]!, tout - env[2]!, share - dt.clutchNm);
  const hi = Math.min(env[0]!, tout - env[3]!, share + dt.clutchNm);
  return solveShare(dt, wc, tout, lo, hi, dt.deviceW[MODE_LOCKED]!, out);
}
