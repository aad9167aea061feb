/**
 * Wheel-torque limits at a wheel speed (DESIGN.md §6): the largest motoring and braking wheel
 * torque for which a feasible setting exists, every limit included.
 *
 * Machine part: exact, from machineLimits.ts.
 * Battery part: the machine limit is tried first. If the battery forbids it, the cut is located
 * on the battery margin g(m) at wheel torque magnitude m — for the charge limit the largest
 * battery power any machine-feasible setting reaches plus the charge limit, for the discharge
 * limit the discharge limit minus the least (both exact, from the same piecewise-linear
 * machinery with the objective's sign chosen) — by regula falsi with the Illinois modification
 * between zero torque (g >= 0) and the machine limit (g < 0), until g is zero to rounding or the
 * bracket is within ROOT_REL_TOL. The end found is checked with the optimiser and every limit,
 * and ISLAND_PROBES evenly spaced torques above it are tried; if one of them is feasible, or the margin does not explain the cut, the limit falls
 * back to a scan from the machine limit down to zero in SCAN_STEPS equal steps and bisection to
 * BISECTION_REL_TOL between the first feasible step and the one above it. Either way the result
 * is feasible; a feasible island above an infeasible gap narrower than the probe spacing would
 * be missed (battery limits in practice cut a single band off the top).
 */
import { ModelError } from '../problem.js';
import { carrierFromWheelTorque } from '../gearset/finalDrive.js';
import { rpmToRadS } from '../units.js';
import { MODES, type SolveOptions } from './types.js';
import type { Drivetrain } from './drivetrain.js';
import { anyFeasible, modeMask, solveMode } from './modes.js';
import { machineWheelLimit } from './machineLimits.js';

export { machineWheelLimit } from './machineLimits.js';

export const SCAN_STEPS = 32;
export const BISECTION_REL_TOL = 1e-6;
export const ROOT_REL_TOL = 1e-9;
export const ISLAND_PROBES = 2;

/** Whether wheel torque σ·m (N·m) at wheel speed ω_w (rad/s) has a feasible setting, battery included. */
function feasibleWheel(dt: Drivetrain, mask: number, wheelRadS: number, sigma: number, m: number): boolean {
  const wc = dt.fdRatio * wheelRadS;
  const tout = carrierFromWheelTorque(dt.fdRatio, dt.fdEfficiency, sigma * m, wheelRadS);
  return anyFeasible(dt, mask, wc, tout);
}

/**
 * Extreme battery power (W) over machine-feasible settings (battery limits ignored) of the modes
 * in `mask` at ω_c (rad/s), T_out (N·m): the least for sense +1, the largest for sense −1. NaN
 * when no setting is machine-feasible.
 */
export function batteryPowerExtreme(dt: Drivetrain, mask: number, wc: number, tout: number, sense: number): number {
  const w = dt.work;
  const c = w.spare;
  let best = Number.NaN;
  w.sense = sense;
  w.battery = false;
  try {
    for (let m = 0; m < MODES.length; m++) {
      if (!(mask & (1 << m)) || !solveMode(dt, m, wc, tout, c)) continue;
      if (Number.isNaN(best) || sense * c.p < sense * best) best = c.p;
    }
  } finally {
    w.sense = 1;
    w.battery = true;
  }
  return best;
}

function batteryMargin(dt: Drivetrain, mask: number, wheelRadS: number, sigma: number, m: number, charge: boolean): number {
  const wc = dt.fdRatio * wheelRadS;
  const tout = carrierFromWheelTorque(dt.fdRatio, dt.fdEfficiency, sigma * m, wheelRadS);
  const p = batteryPowerExtreme(dt, mask, wc, tout, charge ? -1 : 1);
  return charge ? p + dt.maxChargeW : dt.maxDischargeW - p;
}

/** Root of the battery margin in [0, upper] (see the module comment); −1 when it does not settle the limit. */
function batteryCut(dt: Drivetrain, mask: number, wheelRadS: number, sigma: number, upper: number): number {
  // Braking is usually cut by the charge limit, driving by the discharge limit: try that first.
  let charge = sigma * wheelRadS < 0;
  let gb = batteryMargin(dt, mask, wheelRadS, sigma, upper, charge);
  if (!(gb < 0)) {
    charge = !charge;
    gb = batteryMargin(dt, mask, wheelRadS, sigma, upper, charge);
    if (!(gb < 0)) return -1;
  }
  let a = 0;
  let b = upper;
  let ga = batteryMargin(dt, mask, wheelRadS, sigma, 0, charge);
  if (!(ga >= 0)) return -1;
  let side = 0;
  for (let it = 0; it < 200 && b - a > ROOT_REL_TOL * b; it++) {
    let c = b - (gb * (b - a)) / (gb - ga);
    if (!(c > a && c < b)) c = 0.5 * (a + b);
    const gc = batteryMargin(dt, mask, wheelRadS, sigma, c, charge);
    if (Number.isNaN(gc)) return -1;
    if (gc >= 0) {
      a = c;
      ga = gc;
      if (gc <= dt.tolPower) break; // on the battery limit itself
      if (side === 1) gb *= 0.5;
      side = 1;
    } else {
      b = c;
      gb = gc;
      if (side === -1) ga *= 0.5;
      side = -1;
    }
  }
  if (!feasibleWheel(dt, mask, wheelRadS, sigma, a)) return -1;
  for (let q = 1; q <= ISLAND_PROBES; q++) {
    if (feasibleWheel(dt, mask, wheelRadS, sigma, a + ((upper - a) * q) / (ISLAND_PROBES + 1))) return -1;
  }
  return a;
}

/** Scan from `upper` down to zero, then bisection (see the module comment); −1 when nothing is feasible. */
export function scanDown(dt: Drivetrain, mask: number, wheelRadS: number, sigma: number, upper: number): number {
  let hi = upper;
  for (let j = 1; j <= SCAN_STEPS; j++) {
    const m = j === SCAN_STEPS ? 0 : upper * (1 - j / SCAN_STEPS);
    if (!feasibleWheel(dt, mask, wheelRadS, sigma, m)) {
      hi = m;
      continue;
    }
    let lo = m;
    while (hi - lo > BISECTION_REL_TOL * hi && hi - lo > 1e-12) {
      const mid = 0.5 * (lo + hi);
      if (feasibleWheel(dt, mask, wheelRadS, sigma, mid)) lo = mid;
      else hi = mid;
    }
    return lo;
  }
  return -1;
}

/**
 * Largest magnitude m in [0, upper] (N·m) such that wheel torque σ·m at wheel speed ω_w (rad/s)
 * is feasible with every limit, battery included: `upper` itself if feasible, else the battery
 * cut (see the module comment). Returns −1 when not even zero torque is feasible.
 */
export function largestFeasibleWheel(dt: Drivetrain, mask: number, wheelRadS: number, sigma: number, upper: number): number {
  if (feasibleWheel(dt, mask, wheelRadS, sigma, upper)) return upper;
  return batteryLimitedWheel(dt, mask, wheelRadS, sigma, upper);
}

/** {@link largestFeasibleWheel} when `upper` is already known to be infeasible. */
export function batteryLimitedWheel(dt: Drivetrain, mask: number, wheelRadS: number, sigma: number, upper: number): number {
  const cut = batteryCut(dt, mask, wheelRadS, sigma, upper);
  return cut >= 0 ? cut : scanDown(dt, mask, wheelRadS, sigma, upper);
}

export interface WheelTorqueLimits {
  /** Largest wheel torque (magnitude, N·m) driving in the direction of travel (forward at standstill). */
  maxMotoringWheelNm: number;
  /** Largest wheel torque (magnitude, N·m) against the direction of travel (negative torque at standstill). */
  maxBrakingWheelNm: number;
  /** The same limits as signed wheel torques, N·m: largest and smallest. */
  maxWheelNm: number;
  minWheelNm: number;
}

/**
 * Largest motoring and braking wheel torque (N·m) at a wheel speed (rpm) for which a feasible
 * setting exists, including battery limits. Zero on both sides when no mode can turn.
 */
export function wheelTorqueLimits(dt: Drivetrain, wheelSpeedRpm: number, opts: SolveOptions = {}): WheelTorqueLimits {
  if (!Number.isFinite(wheelSpeedRpm)) throw new ModelError('invalid-request', 'wheel speed must be a finite number (rpm)', 'wheelSpeedRpm');
  return wheelLimitsAt(dt, modeMask(dt, opts.modes), rpmToRadS(wheelSpeedRpm));
}

/**
 * {@link wheelTorqueLimits} at wheel speed ω_w (rad/s) for a mode mask; `knownSigma` and
 * `knownMachine` pass a machine limit already computed for one side.
 */
export function wheelLimitsAt(dt: Drivetrain, mask: number, wW: number, knownSigma = 0, knownMachine = -1): WheelTorqueLimits {
  // Recent answers are kept: a table row or a batch asks for the same speed many times.
  const cache = dt.work.limitCache;
  let up = -1;
  let down = -1;
  for (let e = 0; e < cache.length; e += 4) {
    if (cache[e] === mask && cache[e + 1] === wW) {
      up = cache[e + 2]!;
      down = cache[e + 3]!;
      break;
    }
  }
  if (up < 0) {
    const lim = [0, 0];
    for (let s = 0; s < 2; s++) {
      const sigma = s === 0 ? 1 : -1;
      const machine = !mask ? -1 : sigma === knownSigma ? knownMachine : machineWheelLimit(dt, mask, wW, sigma);
      if (machine < 0) continue;
      lim[s] = Math.max(0, largestFeasibleWheel(dt, mask, wW, sigma, machine));
    }
    up = lim[0]!;
    down = lim[1]!;
    const e = dt.work.limitCacheNext;
    cache[e] = mask;
    cache[e + 1] = wW;
    cache[e + 2] = up;
    cache[e + 3] = down;
    dt.work.limitCacheNext = (e + 4) % cache.length;
  }
  const fwd = wW >= 0;
  return {
    maxMotoringWheelNm: fwd ? up : down,
    maxBrakingWheelNm: fwd ? down : up,
    maxWheelNm: up,
    minWheelNm: down === 0 ? 0 : -down,
  };
}
