/**
 * The per-point optimum (DESIGN.md §6): over every available mode and its free variable, the
 * feasible setting with the least battery power, the best setting of each other mode, and for
 * points beyond the limits either friction-brake help (braking, not strict) or a reason with the
 * achievable wheel torques. Interface units: rpm, N·m, W.
 */
import { ModelError } from '../problem.js';
import { carrierFromWheelTorque } from '../gearset/finalDrive.js';
import { rpmToRadS } from '../units.js';
import { MODES, type InfeasibleReason, type ModeSetting, type PointResult, type SolveOptions } from './types.js';
import type { Drivetrain } from './drivetrain.js';
import { batteryLimitedWheel, wheelLimitsAt } from './envelope.js';
import { machineWheelLimit } from './machineLimits.js';
import { modeCanTurn, modeMask, solveMode } from './modes.js';
import { buildSetting } from './setting.js';

export interface WheelPoint {
  wheelSpeedRpm: number;
  wheelTorqueNm: number;
}

/** Solves every mode in `mask` at a wheel torque (N·m); returns whether any is feasible. */
function solveModes(dt: Drivetrain, mask: number, wheelRadS: number, wheelNm: number): boolean {
  const wc = dt.fdRatio * wheelRadS;
  const tout = carrierFromWheelTorque(dt.fdRatio, dt.fdEfficiency, wheelNm, wheelRadS);
  let any = false;
  for (let m = 0; m < MODES.length; m++) {
    const c = dt.work.cand[m]!;
    c.ok = false;
    if (mask & (1 << m) && solveMode(dt, m, wc, tout, c)) any = true;
  }
  return any;
}

function feasibleResult(
  dt: Drivetrain,
  p: WheelPoint,
  opts: SolveOptions,
  wheelRadS: number,
  electricNm: number,
  frictionNm: number,
  extraBinding?: string,
): PointResult {
  // Modes ranked by the optimiser's own battery power (ties: mode order), so the lean answer and
  // the full one always name the same optimum.
  const cand = dt.work.cand;
  const order: number[] = [];
  for (let m = 0; m < MODES.length; m++) if (cand[m]!.ok) order.push(m);
  order.sort((a, b) => cand[a]!.p - cand[b]!.p || a - b);
  if (opts.alternatives === false) order.length = 1;
  const settings: ModeSetting[] = order.map((m) => buildSetting(dt, m, cand[m]!, wheelRadS, electricNm, frictionNm));
  const best = settings[0]!;
  if (extraBinding && !best.binding.includes(extraBinding)) best.binding.push(extraBinding);
  return { wheelSpeedRpm: p.wheelSpeedRpm, wheelTorqueNm: p.wheelTorqueNm, feasible: true, ...best, alternatives: settings.slice(1) };
}

function infeasible(p: WheelPoint, reason: InfeasibleReason, maxMotoringWheelNm: number, maxBrakingWheelNm: number): PointResult {
  return {
    wheelSpeedRpm: p.wheelSpeedRpm,
    wheelTorqueNm: p.wheelTorqueNm,
    feasible: false,
    reason,
    maxMotoringWheelNm,
    maxBrakingWheelNm,
    alternatives: [],
  };
}

/**
 * Battery-optimal setting at a wheel point: speed (rpm, signed) and torque (N·m, signed).
 * Braking (T·ω < 0) beyond what the machines or battery can take is shared with friction brakes
 * unless `opts.strict`: the machines then brake with the largest torque any feasible setting
 * reaches, and `frictionBrakeNm` carries the rest.
 */
export function solvePoint(dt: Drivetrain, wheelSpeedRpm: number, wheelTorqueNm: number, opts: SolveOptions = {}): PointResult {
  if (!Number.isFinite(wheelSpeedRpm)) throw new ModelError('invalid-request', 'wheel speed must be a finite number (rpm)', 'wheelSpeedRpm');
  if (!Number.isFinite(wheelTorqueNm)) throw new ModelError('invalid-request', 'wheel torque must be a finite number (N·m)', 'wheelTorqueNm');
  const point = { wheelSpeedRpm, wheelTorqueNm };
  const mask = modeMask(dt, opts.modes);
  if (mask === 0) return infeasible(point, 'no-mode-available', 0, 0);
  const wW = rpmToRadS(wheelSpeedRpm);
  if (solveModes(dt, mask, wW, wheelTorqueNm)) return feasibleResult(dt, point, opts, wW, wheelTorqueNm, 0);

  const wc = dt.fdRatio * wW;
  let turns = false;
  for (let m = 0; m < MODES.length; m++) if (mask & (1 << m) && modeCanTurn(dt, m, wc)) turns = true;
  if (!turns) return infeasible(point, 'above-max-speed', 0, 0);

  const sigma = wheelTorqueNm > 0 ? 1 : wheelTorqueNm < 0 ? -1 : wW >= 0 ? 1 : -1;
  const asked = Math.abs(wheelTorqueNm);
  const machine = machineWheelLimit(dt, mask, wW, sigma);
  const machineExceeded = asked > machine * (1 + 1e-9) + 1e-12;
  const braking = wheelTorqueNm * wW < 0;
  if (braking && !opts.strict) {
    const upper = Math.min(asked, machine);
    // The machines' own limit first (the request itself was tried above), then the battery cut.
    if (upper < asked && solveModes(dt, mask, wW, sigma * upper)) return feasibleResult(dt, point, opts, wW, sigma * upper, asked - upper);
    const got = batteryLimitedWheel(dt, mask, wW, sigma, upper);
    if (got >= 0 && solveModes(dt, mask, wW, sigma * got)) {
      return feasibleResult(dt, point, opts, wW, sigma * got, asked - got, batteryLimitNear(dt));
    }
  }
  // Power to the wheels (T·ω >= 0, standstill included) is motoring, as in the final drive.
  const reason: InfeasibleReason =
    machineExceeded && !(braking && !opts.strict) ? (braking ? 'above-braking-limit' : 'above-motoring-limit') : 'battery-limit';
  const lim = wheelLimitsAt(dt, mask, wW, sigma, machine);
  return infeasible(point, reason, lim.maxMotoringWheelNm, lim.maxBrakingWheelNm);
}

/** The battery limit nearest to the best candidate's battery power (the one a battery-cut answer sits on). */
function batteryLimitNear(dt: Drivetrain): string {
  let p = Number.POSITIVE_INFINITY;
  for (const c of dt.work.cand) if (c.ok && c.p < p) p = c.p;
  return Math.abs(p + dt.maxChargeW) <= Math.abs(p - dt.maxDischargeW) ? 'battery-charge' : 'battery-discharge';
}

/** {@link solvePoint} over many points. */
export function solvePoints(dt: Drivetrain, points: readonly WheelPoint[], opts: SolveOptions = {}): PointResult[] {
  const out: PointResult[] = new Array(points.length);
  for (let i = 0; i < points.length; i++) out[i] = solvePoint(dt, points[i]!.wheelSpeedRpm, points[i]!.wheelTorqueNm, opts);
  return out;
}
