/**
 * Synthetic machines and drivetrains for vehicle-level tests: invented data, not a real product.
 * Maps: constant torque to a base speed, then constant power, up to the speed limit; loss
 * L = a·τ² + b·|ω| + c·ω² (copper-like, friction-like and iron-like terms), or zero for a
 * lossless machine.
 */
import { buildMachineMap, type MachineMap } from '../../src/machine/map.js';
import { buildDrivetrain, type Drivetrain, type DrivetrainInput } from '../../src/solver/drivetrain.js';
import { parseVehicle, type Vehicle } from '../../src/vehicle/schema.js';

export interface SyntheticMachine {
  name: string;
  maxTorqueNm: number;
  baseSpeedRpm: number;
  maxSpeedRpm: number;
  /** Loss coefficients: W per (N·m)², W per rad/s, W per (rad/s)². */
  copper: number;
  friction: number;
  iron: number;
}

export function syntheticMap(m: SyntheticMachine, speedSteps = 13, torqueSteps = 13): MachineMap {
  const speedRpm = Array.from({ length: speedSteps }, (_, i) => (m.maxSpeedRpm * i) / (speedSteps - 1));
  const torqueNm = Array.from({ length: torqueSteps }, (_, j) => -m.maxTorqueNm + (2 * m.maxTorqueNm * j) / (torqueSteps - 1));
  const env = speedRpm.map((n) => (n <= m.baseSpeedRpm ? m.maxTorqueNm : (m.maxTorqueNm * m.baseSpeedRpm) / n));
  const lossW = speedRpm.map((n) => {
    const w = (n * Math.PI) / 30;
    return torqueNm.map((t) => m.copper * t * t + m.friction * w + m.iron * w * w);
  });
  return buildMachineMap(
    m.name,
    { speedRpm, torqueNm, lossW, maxTorqueNm: env, minTorqueNm: env.map((x) => -x), maxSpeedRpm: m.maxSpeedRpm, reverse: true },
    { source: 'grid', filledCells: 0, extrapolatedCells: 0, zeroSpeedLossChangeW: 0, zeroSpeedTorqueChangeNm: 0, notes: ['synthetic test map'] },
  );
}

export const SUN: SyntheticMachine = { name: 'sun-test', maxTorqueNm: 200, baseSpeedRpm: 4000, maxSpeedRpm: 12000, copper: 0.02, friction: 0.3, iron: 0.0008 };
export const RING: SyntheticMachine = { name: 'ring-test', maxTorqueNm: 400, baseSpeedRpm: 3000, maxSpeedRpm: 9000, copper: 0.015, friction: 0.5, iron: 0.0015 };

export function machineLookup(lossless = false): (name: string) => MachineMap | undefined {
  const z = (m: SyntheticMachine): SyntheticMachine => (lossless ? { ...m, copper: 0, friction: 0, iron: 0 } : m);
  const maps = new Map([
    [SUN.name, syntheticMap(z(SUN))],
    [RING.name, syntheticMap(z(RING))],
  ]);
  return (n) => maps.get(n);
}

/** Zs 30, Zr 78, 3 planets (Zp 24; (30+78)/3 = 36; adjacency 46.8 > 26). */
export function drivetrainDoc(opts: { lossless?: boolean; devices?: boolean } = {}): DrivetrainInput {
  const lossless = opts.lossless ?? false;
  const devices = opts.devices ?? true;
  return {
    sunMachine: SUN.name,
    ringMachine: RING.name,
    gearset: { sunTeeth: 30, ringTeeth: 78, planets: 3, baseEfficiency: lossless ? 1 : 0.98 },
    finalDrive: { ratio: 4, efficiency: lossless ? 1 : 0.97 },
    wheelRadiusM: 0.3,
    ...(devices
      ? {
          devices: {
            ringBrake: { engagedW: lossless ? 0 : 8, releasedW: 0 },
            sunBrake: { engagedW: lossless ? 0 : 8, releasedW: 0 },
            lockClutch: { engagedW: lossless ? 0 : 10, releasedW: 0 },
          },
        }
      : {}),
    battery: { maxDischargeW: 250_000, maxChargeW: 250_000 },
    auxiliaryW: lossless ? 0 : 150,
  };
}

export function testDrivetrain(opts: { lossless?: boolean; devices?: boolean } = {}): Drivetrain {
  return buildDrivetrain(opts.lossless ? 'lossless-test' : 'lossy-test', drivetrainDoc(opts), machineLookup(opts.lossless));
}

/** An invented 1500 kg car. */
export function testVehicle(over: Record<string, unknown> = {}): Vehicle {
  return parseVehicle({ massKg: 1500, rollingResistance: 0.01, dragAreaM2: 0.6, ...over });
}
