/**
 * Turns a mode's best candidate (SI units) into the reported ModeSetting (rpm, N·m, W): machine
 * states, mesh and final-drive loss, device and auxiliary power, battery power, system
 * efficiency and the limits that bind.
 */
import { lossAny, type MachineMap } from '../machine/map.js';
import { meshLoss } from '../gearset/planetary.js';
import { finalDriveLoss } from '../gearset/finalDrive.js';
import { efficiencyFromLoss, radSToRpm } from '../units.js';
import { MODES, type MachineState, type ModeSetting } from './types.js';
import type { Drivetrain } from './drivetrain.js';
import { MODE_LOCKED, MODE_RING_HELD, MODE_SPLIT, MODE_SUN_HELD } from './modeIndex.js';
import { envelopeAt } from './machineEval.js';
import { clutchTorque } from './locked.js';
import type { Candidate } from './work.js';

/** Relative closeness at which a limit is reported as binding. */
export const BINDING_REL_TOL = 1e-6;

function heldState(): MachineState {
  return { speedRpm: 0, torqueNm: 0, electricalW: 0, lossW: 0, efficiency: null };
}

function machineState(map: MachineMap, w: number, t: number): MachineState {
  const loss = lossAny(map, w, t);
  const pm = t * w;
  return { speedRpm: radSToRpm(w), torqueNm: t, electricalW: pm + loss, lossW: loss, efficiency: efficiencyFromLoss(pm, loss) };
}

function near(value: number, limit: number): boolean {
  return limit !== 0 && Math.abs(value - limit) <= BINDING_REL_TOL * Math.abs(limit);
}

function machineBinding(dt: Drivetrain, sun: boolean, w: number, t: number, freeSpeed: boolean, out: string[]): void {
  const map = sun ? dt.sun : dt.ring;
  const who = sun ? 'sun' : 'ring';
  const env = dt.work.env;
  envelopeAt(map, w, env, 0);
  if (near(t, env[0]!)) out.push(`${who}-max-torque`);
  if (near(t, env[1]!)) out.push(`${who}-min-torque`);
  if (Math.abs(w) >= map.maxSpeedRadS * (1 - BINDING_REL_TOL)) out.push(`${who}-max-speed`);
  if (freeSpeed && !map.reverse && Math.abs(w) <= BINDING_REL_TOL * map.maxSpeedRadS) out.push(`${who}-no-reverse`);
}

/**
 * Reported setting of mode m. `electricWheelNm` is the wheel torque the machines deliver (N·m),
 * `frictionNm` the friction-brake share (magnitude, N·m), `wheelRadS` the wheel speed (rad/s).
 */
export function buildSetting(dt: Drivetrain, m: number, c: Candidate, wheelRadS: number, electricWheelNm: number, frictionNm: number): ModeSetting {
  const wc = dt.fdRatio * wheelRadS;
  const tout = c.ts + c.tr;
  const sun = m === MODE_SUN_HELD ? heldState() : machineState(dt.sun, c.ws, c.ts);
  const ring = m === MODE_RING_HELD ? heldState() : machineState(dt.ring, c.wr, c.tr);
  const meshLossW = m === MODE_LOCKED ? 0 : meshLoss(dt.eta0, c.ts, tout, c.ws - wc);
  const finalDriveLossW = finalDriveLoss(dt.fdRatio, dt.fdEfficiency, electricWheelNm, wheelRadS);
  const deviceW = dt.deviceW[m]!;
  const batteryW = sun.electricalW + ring.electricalW + dt.auxW + deviceW;

  const binding: string[] = [];
  if (m !== MODE_SUN_HELD) machineBinding(dt, true, c.ws, c.ts, m === MODE_SPLIT, binding);
  if (m !== MODE_RING_HELD) machineBinding(dt, false, c.wr, c.tr, m === MODE_SPLIT, binding);
  if (near(batteryW, dt.maxDischargeW)) binding.push('battery-discharge');
  if (near(batteryW, -dt.maxChargeW)) binding.push('battery-charge');
  if (m === MODE_RING_HELD && near(Math.abs(c.tr), dt.ringBrakeNm)) binding.push('ring-brake-capacity');
  if (m === MODE_SUN_HELD && near(Math.abs(c.ts), dt.sunBrakeNm)) binding.push('sun-brake-capacity');
  if (m === MODE_LOCKED && near(clutchTorque(dt.k, c.ts, tout), dt.clutchNm)) binding.push('clutch-capacity');

  const wheelW = electricWheelNm * wheelRadS;
  let systemEfficiency: number | null = null;
  if (wheelW > 0 && batteryW > 0) systemEfficiency = wheelW / batteryW;
  else if (wheelW < 0 && batteryW < 0) systemEfficiency = batteryW / wheelW;

  return {
    mode: MODES[m]!,
    sun,
    ring,
    meshLossW,
    finalDriveLossW,
    deviceW,
    auxiliaryW: dt.auxW,
    batteryW,
    systemEfficiency,
    binding,
    electricWheelTorqueNm: electricWheelNm,
    frictionBrakeNm: frictionNm,
  };
}
