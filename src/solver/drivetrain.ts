/**
 * Drivetrain document (two machines on a planetary set, carrier to the final drive) and the
 * prepared form the solver works on: gear constants, mode availability, device power, battery
 * limits, sorted breakpoint arrays in machine speed and torque, and preallocated scratch.
 */
import { z } from 'zod';
import { ModelError, parseOrThrow } from '../problem.js';
import { machineName } from '../machine/schema.js';
import type { MachineMap } from '../machine/map.js';
import { checkGeometry } from '../gearset/geometry.js';
import { regimeDivisor, ringHeldRatio, sunHeldRatio } from '../gearset/planetary.js';
import { msToKph, radSToRpm } from '../units.js';
import { MODES, type Mode } from './types.js';
import { MODE_LOCKED, MODE_RING_HELD, MODE_SPLIT, MODE_SUN_HELD } from './modeIndex.js';
import { wheelTorqueLimits } from './envelope.js';
import { createWork, type SolverWork } from './work.js';

const device = z
  .object({
    engagedW: z.number().min(0).max(1e5).describe('DC power drawn while engaged, W (<= 100 kW)'),
    releasedW: z.number().min(0).max(1e5).describe('DC power drawn while released, W (a spring-applied brake draws power to stay open; <= 100 kW)'),
    maxTorqueNm: z
      .number()
      .positive()
      .max(1e6)
      .optional()
      .describe('Torque capacity, N·m: for a brake the held member reaction, for the lock-up clutch |T_s − T_out·Zs/(Zs+Zr)|; no limit when absent'),
  })
  .strict();

export const drivetrainSchema = z
  .object({
    description: z.string().max(4000).optional().describe('Free text: what this drivetrain is'),
    sunMachine: machineName.describe('Name of the machine map on the sun gear'),
    ringMachine: machineName.describe('Name of the machine map on the ring gear'),
    gearset: z
      .object({
        sunTeeth: z.number().int().min(1).max(10_000).describe('Sun teeth Zs'),
        ringTeeth: z.number().int().min(1).max(10_000).describe('Ring teeth Zr (k = Zr/Zs)'),
        planets: z.number().int().min(2).max(32).describe('Number of equally spaced planets N'),
        baseEfficiency: z.number().min(0.5).lte(1).describe('Basic efficiency η0 with the carrier held, 0.5..1 (typically 0.97–0.985)'),
      })
      .strict()
      .describe('Simple planetary set: sun machine, ring machine, carrier to the final drive'),
    finalDrive: z
      .object({
        ratio: z.number().positive().max(1000).describe('Carrier speed / wheel speed (<= 1000)'),
        efficiency: z.number().min(0.5).lte(1).describe('Final-drive efficiency 0.5..1, applied in the direction of power flow'),
      })
      .strict(),
    wheelRadiusM: z.number().min(0.01).max(5).describe('Dynamic rolling radius, m (0.01..5)'),
    devices: z
      .object({
        sunBrake: device.optional().describe('Brake that holds the sun (enables sun-held mode)'),
        ringBrake: device.optional().describe('Brake that holds the ring (enables ring-held mode)'),
        lockClutch: device.optional().describe('Clutch that locks the set as a block (enables locked mode)'),
      })
      .strict()
      .optional()
      .describe('Optional hold devices'),
    battery: z
      .object({
        maxDischargeW: z.number().positive().max(1e8).describe('Largest battery discharge power, W (<= 100 MW)'),
        maxChargeW: z.number().positive().max(1e8).describe('Largest battery charge power (a magnitude), W (<= 100 MW)'),
      })
      .strict(),
    auxiliaryW: z.number().min(0).max(1e6).default(0).describe('Constant auxiliary DC load, W (<= 1 MW)'),
  })
  .strict();

export type DrivetrainDoc = z.output<typeof drivetrainSchema>;
export type DrivetrainInput = z.input<typeof drivetrainSchema>;

export interface Drivetrain {
  readonly name: string;
  readonly doc: DrivetrainDoc;
  readonly sun: MachineMap;
  readonly ring: MachineMap;
  readonly sunTeeth: number;
  readonly ringTeeth: number;
  readonly planetTeeth: number;
  readonly planets: number;
  /** k = Zr/Zs. */
  readonly k: number;
  /** Basic efficiency η0. */
  readonly eta0: number;
  /** T_s = T_out/c: c = 1 + k·η0 when the sun delivers, 1 + k/η0 when the ring delivers. */
  readonly cSunDelivers: number;
  readonly cRingDelivers: number;
  readonly fdRatio: number;
  readonly fdEfficiency: number;
  readonly wheelRadiusM: number;
  readonly auxW: number;
  readonly maxDischargeW: number;
  readonly maxChargeW: number;
  /** Whether each mode (index as MODES) has the hardware it needs. */
  readonly modeAvailable: readonly boolean[];
  /** Device DC power in each mode (index as MODES), W. */
  readonly deviceW: Float64Array;
  /** Torque capacities, N·m (Infinity when not limited). */
  readonly sunBrakeNm: number;
  readonly ringBrakeNm: number;
  readonly clutchNm: number;
  /** Signed sun grid speeds, rad/s, ascending (mirrored when reverse is allowed). */
  readonly sunSpeedNodes: Float64Array;
  /** Signed ring grid speeds, rad/s, ascending (mirrored when reverse is allowed). */
  readonly ringSpeedNodes: Float64Array;
  /** Torque nodes (N·m, ascending) of each map, and their mirror −τ (ascending) for reverse speeds. */
  readonly sunTorqueNodes: Float64Array;
  readonly sunTorqueMirror: Float64Array;
  readonly ringTorqueNodes: Float64Array;
  readonly ringTorqueMirror: Float64Array;
  /** Feasibility slack on torques (N·m) and powers (W). */
  readonly tolTorque: number;
  readonly tolPower: number;
  /** Preallocated scratch for the hot path. Not safe for concurrent use from one thread's re-entrant calls. */
  readonly work: SolverWork;
}

function signedNodes(axis: Float64Array, mirror: boolean): Float64Array {
  const n = axis.length;
  if (!mirror) return Float64Array.from(axis);
  const out = new Float64Array(2 * n - 1);
  for (let i = 0; i < n; i++) {
    out[n - 1 - i] = -axis[i]!;
    out[n - 1 + i] = axis[i]!;
  }
  out[n - 1] = 0;
  return out;
}

function mirrorAxis(axis: Float64Array): Float64Array {
  const n = axis.length;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = -axis[n - 1 - i]!;
  return out;
}

/**
 * Validates a drivetrain document, checks the gear geometry, resolves the machines and prepares
 * everything the per-point solver needs.
 */
export function buildDrivetrain(name: string, input: unknown, getMachine: (name: string) => MachineMap | undefined): Drivetrain {
  const named = machineName.safeParse(name);
  if (!named.success) throw new ModelError('drivetrain-invalid', `drivetrain name: ${named.error.issues[0]!.message}`, 'name');
  const doc = parseOrThrow(drivetrainSchema, input, 'drivetrain-invalid');
  const g = checkGeometry(doc.gearset.sunTeeth, doc.gearset.ringTeeth, doc.gearset.planets);
  const sun = getMachine(doc.sunMachine);
  if (!sun) throw new ModelError('unknown-machine', `no machine named "${doc.sunMachine}"`, 'sunMachine');
  const ring = getMachine(doc.ringMachine);
  if (!ring) throw new ModelError('unknown-machine', `no machine named "${doc.ringMachine}"`, 'ringMachine');

  const eta0 = doc.gearset.baseEfficiency;
  const dev = doc.devices ?? {};
  const modeAvailable = [true, dev.ringBrake !== undefined, dev.sunBrake !== undefined, dev.lockClutch !== undefined];
  const deviceW = new Float64Array(MODES.length);
  const engagedIn: Record<'sunBrake' | 'ringBrake' | 'lockClutch', number> = {
    ringBrake: MODE_RING_HELD,
    sunBrake: MODE_SUN_HELD,
    lockClutch: MODE_LOCKED,
  };
  for (let m = 0; m < MODES.length; m++) {
    for (const key of ['sunBrake', 'ringBrake', 'lockClutch'] as const) {
      const d = dev[key];
      if (d) deviceW[m] += engagedIn[key] === m ? d.engagedW : d.releasedW;
    }
  }
  const tMax = Math.max(maxAbs(sun.torqueNm), maxAbs(ring.torqueNm));
  const sunSpeedNodes = signedNodes(sun.speedRadS, sun.reverse);
  const ringSpeedNodes = signedNodes(ring.speedRadS, ring.reverse);
  return Object.freeze({
    name,
    doc,
    sun,
    ring,
    sunTeeth: g.sunTeeth,
    ringTeeth: g.ringTeeth,
    planetTeeth: g.planetTeeth,
    planets: g.planets,
    k: g.k,
    eta0,
    cSunDelivers: regimeDivisor(g.k, eta0, true),
    cRingDelivers: regimeDivisor(g.k, eta0, false),
    fdRatio: doc.finalDrive.ratio,
    fdEfficiency: doc.finalDrive.efficiency,
    wheelRadiusM: doc.wheelRadiusM,
    auxW: doc.auxiliaryW,
    maxDischargeW: doc.battery.maxDischargeW,
    maxChargeW: doc.battery.maxChargeW,
    modeAvailable,
    deviceW,
    sunBrakeNm: dev.sunBrake?.maxTorqueNm ?? Number.POSITIVE_INFINITY,
    ringBrakeNm: dev.ringBrake?.maxTorqueNm ?? Number.POSITIVE_INFINITY,
    clutchNm: dev.lockClutch?.maxTorqueNm ?? Number.POSITIVE_INFINITY,
    sunSpeedNodes,
    ringSpeedNodes,
    sunTorqueNodes: Float64Array.from(sun.torqueNm),
    sunTorqueMirror: mirrorAxis(sun.torqueNm),
    ringTorqueNodes: Float64Array.from(ring.torqueNm),
    ringTorqueMirror: mirrorAxis(ring.torqueNm),
    tolTorque: 1e-9 * (1 + tMax),
    tolPower: 1e-9 * (1 + doc.battery.maxDischargeW + doc.battery.maxChargeW + doc.auxiliaryW),
    work: createWork(sunSpeedNodes.length + ringSpeedNodes.length + 8, 2 * (sun.nTorque + ring.nTorque) + 8),
  });
}

function maxAbs(a: Float64Array): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]!));
  return m;
}

/** Derived facts about a drivetrain, interface units. */
export interface DrivetrainFacts {
  name: string;
  /** k = Zr/Zs. */
  k: number;
  planetTeeth: number;
  availableModes: Mode[];
  /** Machine speed / wheel speed of each available single-speed mode, final drive included. */
  ratios: Partial<Record<Exclude<Mode, 'split'>, number>>;
  /** Largest wheel torque at standstill, N·m, forward (positive) and reverse (a magnitude), all limits included. */
  standstillMaxWheelNm: number;
  standstillMaxReverseWheelNm: number;
  /** Largest wheel speed at which any mode can turn, rpm, forward and reverse (magnitude). */
  maxWheelSpeedRpm: number;
  maxReverseWheelSpeedRpm: number;
  /** Vehicle speed at maxWheelSpeedRpm, km/h. */
  maxVehicleSpeedKph: number;
}

/**
 * Largest carrier speed (rad/s, magnitude) in direction `dir` (±1) at which a mode can turn.
 * Split: some ω_s within both speed limits must exist: |ω_s| <= S_s, |ω_r| <= S_r, so
 * (1 + k)·|ω_c| <= S_s + k·S_r with both machines free to turn that way.
 */
function maxCarrierSpeed(dt: Drivetrain, mode: number, dir: number): number {
  const { sun, ring, k } = dt;
  const sOk = dir > 0 || sun.reverse;
  const rOk = dir > 0 || ring.reverse;
  const S = sun.maxSpeedRadS;
  const R = ring.maxSpeedRadS;
  switch (mode) {
    case MODE_SPLIT: {
      // ω_s = dir·a, ω_r = dir·b with a, b >= 0 when a machine cannot reverse; otherwise either sign.
      const a = sOk ? S : 0;
      const b = rOk ? R : 0;
      return (a + k * b) / (1 + k);
    }
    case MODE_RING_HELD:
      return sOk ? S / ringHeldRatio(k) : 0;
    case MODE_SUN_HELD:
      return rOk ? R / sunHeldRatio(k) : 0;
    default:
      return sOk && rOk ? Math.min(S, R) : 0;
  }
}

/** Summary of a drivetrain: gear constants, modes, ratios, standstill torque, top wheel speed. */
export function describeDrivetrain(dt: Drivetrain): DrivetrainFacts {
  const availableModes = MODES.filter((_, m) => dt.modeAvailable[m]);
  const ratios: DrivetrainFacts['ratios'] = {};
  if (dt.modeAvailable[MODE_RING_HELD]) ratios['ring-held'] = ringHeldRatio(dt.k) * dt.fdRatio;
  if (dt.modeAvailable[MODE_SUN_HELD]) ratios['sun-held'] = sunHeldRatio(dt.k) * dt.fdRatio;
  if (dt.modeAvailable[MODE_LOCKED]) ratios.locked = dt.fdRatio;
  let fwd = 0;
  let rev = 0;
  for (let m = 0; m < MODES.length; m++) {
    if (!dt.modeAvailable[m]) continue;
    fwd = Math.max(fwd, maxCarrierSpeed(dt, m, 1));
    rev = Math.max(rev, maxCarrierSpeed(dt, m, -1));
  }
  const standstill = wheelTorqueLimits(dt, 0);
  const maxWheelSpeedRpm = radSToRpm(fwd / dt.fdRatio);
  return {
    name: dt.name,
    k: dt.k,
    planetTeeth: dt.planetTeeth,
    availableModes,
    ratios,
    standstillMaxWheelNm: standstill.maxWheelNm,
    standstillMaxReverseWheelNm: Math.abs(standstill.minWheelNm),
    maxWheelSpeedRpm,
    maxReverseWheelSpeedRpm: radSToRpm(rev / dt.fdRatio),
    maxVehicleSpeedKph: msToKph((fwd / dt.fdRatio) * dt.wheelRadiusM),
  };
}
