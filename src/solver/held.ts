/**
 * Held modes (DESIGN.md §5): one member braked, the other machine drives alone through the set
 * at a fixed ratio; no free variable. Ring held: ω_s = (1 + k)·ω_c; sun held:
 * ω_r = (1 + k)·ω_c/k. Torques from the power-flow regime, with the standstill rule of
 * src/gearset/planetary.ts (heldDivisor). The brake carries the held member's reaction torque.
 * Speeds rad/s, torques N·m, powers W.
 */
import { lossAny, speedAllowed } from '../machine/map.js';
import { heldDivisor } from '../gearset/planetary.js';
import type { Drivetrain } from './drivetrain.js';
import { MODE_RING_HELD, MODE_SUN_HELD } from './modeIndex.js';
import { envelopeAt } from './machineEval.js';
import type { Candidate } from './work.js';

/** Whether a held mode can turn at carrier speed ω_c (rad/s): the driving machine's speed is allowed. */
export function heldCanTurn(dt: Drivetrain, ringHeld: boolean, wc: number): boolean {
  return ringHeld ? speedAllowed(dt.sun, (1 + dt.k) * wc) : speedAllowed(dt.ring, ((1 + dt.k) * wc) / dt.k);
}

/**
 * The single setting of a held mode at carrier speed ω_c (rad/s) and carrier torque T_out (N·m),
 * checked against speed, envelope, brake capacity and battery limits.
 */
export function solveHeld(dt: Drivetrain, ringHeld: boolean, wc: number, tout: number, out: Candidate): boolean {
  out.ok = false;
  if (!heldCanTurn(dt, ringHeld, wc)) return false;
  const k = dt.k;
  const c = heldDivisor(k, dt.eta0, ringHeld, tout, wc);
  const ts = tout / c;
  const tr = tout - ts;
  const tolT = dt.tolTorque;
  const env = dt.work.env;
  let p: number;
  let ws: number;
  let wr: number;
  if (ringHeld) {
    if (Math.abs(tr) > dt.ringBrakeNm + tolT) return false;
    ws = (1 + k) * wc;
    wr = 0;
    envelopeAt(dt.sun, ws, env, 0);
    if (ts > env[0]! + tolT || ts < env[1]! - tolT) return false;
    p = ts * ws + lossAny(dt.sun, ws, ts) + dt.auxW + dt.deviceW[MODE_RING_HELD]!;
  } else {
    if (Math.abs(ts) > dt.sunBrakeNm + tolT) return false;
    ws = 0;
    wr = ((1 + k) * wc) / k;
    envelopeAt(dt.ring, wr, env, 0);
    if (tr > env[0]! + tolT || tr < env[1]! - tolT) return false;
    p = tr * wr + lossAny(dt.ring, wr, tr) + dt.auxW + dt.deviceW[MODE_SUN_HELD]!;
  }
  const tolP = dt.tolPower;
  if (dt.work.battery && (p > dt.maxDischargeW + tolP || p < -dt.maxChargeW - tolP)) return false;
  out.ok = true;
  out.p = p;
  out.ws = ws;
  out.wr = wr;
  out.ts = ts;
  out.tr = tr;
  return true;
}
