/**
 * Drive-cycle energy (DESIGN.md §7): every step of a cycle asks the wheels for the road load
 * (src/vehicle/roadLoad.ts) at the step's mean speed; the per-point optimum (solvePoint) answers
 * it; battery energy is Σ P_batt·Δt.
 *
 * Rules applied at each step (documented behaviour):
 * - Standstill (both samples at zero speed): the vehicle is held by its brakes; the wheels ask
 *   for no torque (no stall torque on a grade); the drivetrain still draws its idle power.
 * - Braking (T·ω < 0): below `regen.minSpeedKph` friction brakes take all of it; otherwise the
 *   machines are asked for `regen.maxFraction` of it and friction brakes take the rest, together
 *   with whatever the machines or the battery cannot absorb (solvePoint's friction share).
 * - Motoring beyond what the drivetrain can deliver: the drivetrain delivers the largest
 *   motoring torque available at that speed (every limit applied); the step is listed as not
 *   followed and the missing wheel work counts as `shortfallWh`. The trace itself is kept
 *   (speeds, distance and later steps are those of the cycle).
 * - Wheel speed beyond every mode's speed limit: no setting exists; the drivetrain delivers
 *   nothing, draws only the auxiliary loads, friction brakes take any braking, and the step is
 *   listed as not followed.
 * Energy balance (closes to rounding): battery = delivered wheel work + friction-braked energy
 * + machine, mesh, final-drive, device and auxiliary losses.
 */
import { radSToRpm, msToKph } from '../units.js';
import { solvePoint } from '../solver/point.js';
import { MODES, type InfeasibleReason, type Mode, type ModeSetting, type PointResult, type SolveOptions } from '../solver/types.js';
import type { Drivetrain } from '../solver/drivetrain.js';
import { cycleWheelDemand, type StepDemand } from './roadLoad.js';
import type { Cycle, Vehicle } from './schema.js';

export interface CycleRunOptions {
  /** Options passed to the per-point solver. */
  solve?: SolveOptions;
  /** Restrict to these modes (shorthand for solve.modes). */
  modes?: readonly Mode[];
  /** Include per-step series in the result. */
  series?: boolean;
  /** Usable battery energy, Wh: the result then carries the range on repeats of this cycle. */
  usableBatteryWh?: number;
  /**
   * Record the battery energy (Wh) each mode's best setting would take in every step (input to
   * the cycle-optimal bound). Steps where no mode has a setting get their recorded energy in every
   * mode.
   */
  modeEnergies?: boolean;
}

export type UnfollowedReason = InfeasibleReason;

export interface UnfollowedStep {
  /** Start of the step, s. */
  timeS: number;
  durationS: number;
  /** Mean vehicle speed of the step, km/h. */
  speedKph: number;
  requestedWheelTorqueNm: number;
  /** Wheel torque actually delivered (machines and friction brakes together), N·m. */
  deliveredWheelTorqueNm: number;
  reason: UnfollowedReason;
}

export interface ModeUse {
  mode: Mode;
  timeS: number;
  steps: number;
  /** Battery energy taken in this mode (vehicle auxiliary load included), Wh. */
  batteryWh: number;
}

export interface CycleLosses {
  sunMachineWh: number;
  ringMachineWh: number;
  meshWh: number;
  finalDriveWh: number;
  devicesWh: number;
  /** Drivetrain and vehicle auxiliary loads, Wh. */
  auxiliaryWh: number;
}

export interface CycleSeries {
  timeS: number[];
  durationS: number[];
  speedKph: number[];
  gradePct: number[];
  wheelSpeedRpm: number[];
  requestedWheelTorqueNm: number[];
  electricWheelTorqueNm: number[];
  frictionBrakeNm: number[];
  /** Mode of each step; null where no setting existed. */
  mode: (Mode | null)[];
  /** Battery power including the vehicle auxiliary load, W. */
  batteryW: number[];
  sunSpeedRpm: number[];
  sunTorqueNm: number[];
  ringSpeedRpm: number[];
  ringTorqueNm: number[];
}

export interface CycleResult {
  cycle: string;
  drivetrain: string;
  steps: number;
  durationS: number;
  distanceKm: number;
  /** Net battery energy (discharge positive), Wh. */
  batteryWh: number;
  /** batteryWh per km; null when the cycle covers no distance. */
  whPerKm: number | null;
  /** Positive wheel work delivered, Wh. */
  tractiveWh: number;
  /** Net wheel work delivered (tractive minus braking), Wh. */
  wheelWorkWh: number;
  /** Battery energy recovered: Σ of −P_batt·Δt over the steps where the battery charges, Wh. */
  regeneratedWh: number;
  /** Energy taken by friction brakes, Wh. */
  frictionBrakedWh: number;
  /** Wheel work asked for but not delivered (motoring shortfall), Wh. */
  shortfallWh: number;
  losses: CycleLosses;
  modes: ModeUse[];
  modeSwitches: number;
  unfollowed: UnfollowedStep[];
  /** Range on repeats of this cycle for `usableBatteryWh`, km; null when not asked or not net-discharging. */
  rangeKm: number | null;
  series?: CycleSeries;
  /** Per-step battery energy of each mode, Wh, row-major steps × MODES (when asked). */
  modeEnergyWh?: Float64Array;
  /** Index in MODES of the mode used in each step; −1 where no setting existed (when modeEnergies is asked). */
  modeIndex?: Int8Array;
  /** Duration of each step, s (when modeEnergies is asked). */
  stepDurationS?: Float64Array;
}

/** Solves one step's electric request, falling back to the largest deliverable torque. */
function solveStep(
  dt: Drivetrain,
  rpm: number,
  electricAskNm: number,
  opts: SolveOptions,
): { r: PointResult; reason?: InfeasibleReason } {
  const r = solvePoint(dt, rpm, electricAskNm, opts);
  if (r.feasible) return { r };
  const reason = r.reason!;
  const limit = electricAskNm >= 0 ? (r.maxMotoringWheelNm ?? 0) : -(r.maxBrakingWheelNm ?? 0);
  for (const t of [limit, limit * (1 - 1e-6), 0]) {
    const r2 = solvePoint(dt, rpm, t, opts);
    if (r2.feasible) return { r: r2, reason };
  }
  return { r, reason };
}

function emptySeries(): CycleSeries {
  return {
    timeS: [], durationS: [], speedKph: [], gradePct: [], wheelSpeedRpm: [], requestedWheelTorqueNm: [],
    electricWheelTorqueNm: [], frictionBrakeNm: [], mode: [], batteryW: [],
    sunSpeedRpm: [], sunTorqueNm: [], ringSpeedRpm: [], ringTorqueNm: [],
  };
}

/**
 * Runs a cycle on a drivetrain for a vehicle. Wheel radius: the vehicle's when given, else the
 * drivetrain's. Energies in Wh, distance in km (trapezoid rule).
 */
export function runCycle(dt: Drivetrain, vehicle: Vehicle, cycle: Cycle, opts: CycleRunOptions = {}): CycleResult {
  const radius = vehicle.wheelRadiusM ?? dt.wheelRadiusM;
  const demand: StepDemand = cycleWheelDemand(vehicle, cycle, radius);
  const solveOpts: SolveOptions = { ...opts.solve };
  if (opts.modes) solveOpts.modes = opts.modes;
  const n = demand.steps;
  const nm = MODES.length;
  const regenMinMs = vehicle.regen.minSpeedKph / 3.6;
  const maxFraction = vehicle.regen.maxFraction;
  const vehAuxW = vehicle.auxiliaryW;

  let batteryJ = 0;
  let tractiveJ = 0;
  let wheelJ = 0;
  let regenJ = 0;
  let frictionJ = 0;
  let shortfallJ = 0;
  let sunJ = 0;
  let ringJ = 0;
  let meshJ = 0;
  let fdJ = 0;
  let devJ = 0;
  let auxJ = 0;
  let distanceM = 0;
  const modeTime = new Float64Array(nm);
  const modeSteps = new Float64Array(nm);
  const modeJ = new Float64Array(nm);
  let switches = 0;
  let lastMode = -1;
  const unfollowed: UnfollowedStep[] = [];
  const series = opts.series ? emptySeries() : undefined;
  const energies = opts.modeEnergies ? new Float64Array(n * nm) : undefined;
  const modeIndex = opts.modeEnergies ? new Int8Array(n) : undefined;

  for (let k = 0; k < n; k++) {
    const dtS = demand.dtS[k]!;
    const v = demand.speedMs[k]!;
    const w = demand.wheelSpeedRadS[k]!;
    const rpm = radSToRpm(w);
    const asked = v === 0 ? 0 : demand.wheelTorqueNm[k]!;
    distanceM += v * dtS;

    // Regenerative-braking policy: the share the machines are asked for.
    let electricAsk = asked;
    if (asked * w < 0) electricAsk = v < regenMinMs ? 0 : asked * maxFraction;

    const { r, reason } = solveStep(dt, rpm, electricAsk, solveOpts);
    const s: Partial<ModeSetting> = r.feasible ? r : {};
    const electric = r.feasible ? s.electricWheelTorqueNm! : 0;
    // Friction brakes supply whatever of a braking request the machines do not.
    const braking = asked * w < 0;
    const friction = braking ? Math.max(0, electric - asked) : 0;
    const delivered = electric - friction;
    const pBatt = (r.feasible ? s.batteryW! : dt.auxW) + vehAuxW;
    const eBatt = pBatt * dtS;

    batteryJ += eBatt;
    const wheelStepJ = delivered * w * dtS;
    wheelJ += wheelStepJ;
    if (wheelStepJ > 0) tractiveJ += wheelStepJ;
    if (eBatt < 0) regenJ -= eBatt;
    frictionJ += friction * w * dtS;
    if (asked * w > 0 && delivered < asked) shortfallJ += (asked - delivered) * w * dtS;
    if (r.feasible) {
      sunJ += s.sun!.lossW * dtS;
      ringJ += s.ring!.lossW * dtS;
      meshJ += s.meshLossW! * dtS;
      fdJ += s.finalDriveLossW! * dtS;
      devJ += s.deviceW! * dtS;
      auxJ += (s.auxiliaryW! + vehAuxW) * dtS;
    } else {
      auxJ += (dt.auxW + vehAuxW) * dtS;
    }

    const m = r.feasible ? MODES.indexOf(s.mode!) : -1;
    if (m >= 0) {
      modeTime[m] += dtS;
      modeSteps[m]++;
      modeJ[m] += eBatt;
      if (lastMode >= 0 && m !== lastMode) switches++;
      lastMode = m;
    }

    // Listed when the wheels did not get the torque asked for, or the machines could not turn.
    const missed = Math.abs(delivered - asked) > 1e-9 * (1 + Math.abs(asked));
    if (reason !== undefined && (missed || reason === 'above-max-speed')) {
      unfollowed.push({
        timeS: cycle.timeS[k]!,
        durationS: dtS,
        speedKph: msToKph(v),
        requestedWheelTorqueNm: asked,
        deliveredWheelTorqueNm: delivered,
        reason,
      });
    }

    if (energies) {
      modeIndex![k] = m;
      const row = k * nm;
      if (m < 0) {
        for (let j = 0; j < nm; j++) energies[row + j] = eBatt;
      } else {
        for (let j = 0; j < nm; j++) energies[row + j] = Number.POSITIVE_INFINITY;
        energies[row + m] = eBatt;
        for (const alt of r.alternatives) energies[row + MODES.indexOf(alt.mode)] = (alt.batteryW + vehAuxW) * dtS;
      }
    }

    if (series) {
      series.timeS.push(cycle.timeS[k]!);
      series.durationS.push(dtS);
      series.speedKph.push(msToKph(v));
      series.gradePct.push(demand.gradePct[k]!);
      series.wheelSpeedRpm.push(rpm);
      series.requestedWheelTorqueNm.push(asked);
      series.electricWheelTorqueNm.push(electric);
      series.frictionBrakeNm.push(friction);
      series.mode.push(m >= 0 ? MODES[m]! : null);
      series.batteryW.push(pBatt);
      series.sunSpeedRpm.push(r.feasible ? s.sun!.speedRpm : 0);
      series.sunTorqueNm.push(r.feasible ? s.sun!.torqueNm : 0);
      series.ringSpeedRpm.push(r.feasible ? s.ring!.speedRpm : 0);
      series.ringTorqueNm.push(r.feasible ? s.ring!.torqueNm : 0);
    }
  }

  if (energies) for (let i = 0; i < energies.length; i++) energies[i] /= 3600;
  const wh = (j: number): number => j / 3600;
  const distanceKm = distanceM / 1000;
  const batteryWh = wh(batteryJ);
  const whPerKm = distanceKm > 0 ? batteryWh / distanceKm : null;
  const rangeKm =
    opts.usableBatteryWh !== undefined && whPerKm !== null && whPerKm > 0 ? opts.usableBatteryWh / whPerKm : null;
  const modes: ModeUse[] = [];
  for (let m = 0; m < nm; m++) {
    if (modeSteps[m]! > 0) modes.push({ mode: MODES[m]!, timeS: modeTime[m]!, steps: modeSteps[m]!, batteryWh: wh(modeJ[m]!) });
  }
  const result: CycleResult = {
    cycle: cycle.name,
    drivetrain: dt.name,
    steps: n,
    durationS: cycle.timeS[n]! - cycle.timeS[0]!,
    distanceKm,
    batteryWh,
    whPerKm,
    tractiveWh: wh(tractiveJ),
    wheelWorkWh: wh(wheelJ),
    regeneratedWh: wh(regenJ),
    frictionBrakedWh: wh(frictionJ),
    shortfallWh: wh(shortfallJ),
    losses: {
      sunMachineWh: wh(sunJ),
      ringMachineWh: wh(ringJ),
      meshWh: wh(meshJ),
      finalDriveWh: wh(fdJ),
      devicesWh: wh(devJ),
      auxiliaryWh: wh(auxJ),
    },
    modes,
    modeSwitches: switches,
    unfollowed,
    rangeKm,
  };
  if (series) result.series = series;
  if (energies) {
    result.modeEnergyWh = energies;
    result.modeIndex = modeIndex!;
    result.stepDurationS = demand.dtS;
  }
  return result;
}

/** Sum of the wheel work, friction-braked energy and every loss, Wh: equals batteryWh (energy balance). */
export function accountedEnergyWh(r: CycleResult): number {
  const l = r.losses;
  return r.wheelWorkWh + r.frictionBrakedWh + l.sunMachineWh + l.ringMachineWh + l.meshWh + l.finalDriveWh + l.devicesWh + l.auxiliaryWh;
}
