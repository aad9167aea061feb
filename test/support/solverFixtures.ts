/**
 * Synthetic machine maps and drivetrains for solver tests. Invented data: loss surfaces with
 * deliberate bumps (non-convex) and envelopes with corners (constant torque, then constant
 * power), on uneven grids.
 */
import { buildMachineMap, type MachineMap } from '../../src/machine/map.js';
import { buildDrivetrain, type Drivetrain, type DrivetrainInput } from '../../src/solver/drivetrain.js';

export interface SyntheticSpec {
  name: string;
  maxSpeedRpm: number;
  /** Peak torque below the corner speed, N·m. */
  peakNm: number;
  /** Speed where constant power starts, rpm. */
  cornerRpm: number;
  /** Braking envelope as a fraction of the motoring one. */
  brakeShare?: number;
  speedSteps?: number;
  torqueSteps?: number;
  reverse?: boolean;
  /** Loss model coefficients (W, W/(rad/s), W/(rad/s)², W/(N·m)²) and bump amplitude (W). */
  c0?: number;
  c1?: number;
  c2?: number;
  c3?: number;
  bumpW?: number;
  /** Custom loss (W) at speed ω >= 0 (rad/s) and torque T (N·m); overrides the model above. */
  loss?: (w: number, t: number) => number;
}

export function syntheticMap(spec: SyntheticSpec): MachineMap {
  const nS = spec.speedSteps ?? 23;
  const nT = spec.torqueSteps ?? 27;
  const speeds: number[] = [];
  for (let i = 0; i < nS; i++) {
    // Uneven spacing: denser at low speed.
    const u = i / (nS - 1);
    speeds.push(spec.maxSpeedRpm * (0.6 * u + 0.4 * u * u));
  }
  const tMax = spec.peakNm * 1.02;
  const torques: number[] = [];
  for (let j = 0; j < nT; j++) {
    const u = j / (nT - 1);
    torques.push(-tMax + 2 * tMax * (0.5 - 0.5 * Math.cos(Math.PI * u)) + (j > 0 && j < nT - 1 ? 0.37 * Math.sin(j) : 0));
  }
  torques.sort((a, b) => a - b);
  const pMax = spec.peakNm * spec.cornerRpm * (Math.PI / 30);
  const brake = spec.brakeShare ?? 0.9;
  const maxT = speeds.map((n) => (n <= spec.cornerRpm ? spec.peakNm : pMax / (n * (Math.PI / 30))));
  const minT = maxT.map((t) => -brake * t);
  const c0 = spec.c0 ?? 150;
  const c1 = spec.c1 ?? 0.25;
  const c2 = spec.c2 ?? 0.0012;
  const c3 = spec.c3 ?? 0.035;
  const bump = spec.bumpW ?? 120;
  const lossFn =
    spec.loss ??
    ((w: number, t: number) =>
      c0 + c1 * w + c2 * w * w + c3 * t * t + 0.0009 * w * Math.abs(t) + bump * (1 + Math.sin(w / 37 + t / 23) * Math.cos(t / 41 - w / 90)));
  const lossW = speeds.map((n) => torques.map((t) => lossFn(n * (Math.PI / 30), t)));
  return buildMachineMap(
    spec.name,
    { speedRpm: speeds, torqueNm: torques, lossW, maxTorqueNm: maxT, minTorqueNm: minT, maxSpeedRpm: spec.maxSpeedRpm, reverse: spec.reverse ?? true },
    { source: 'grid', filledCells: 0, extrapolatedCells: 0, zeroSpeedLossChangeW: 0, zeroSpeedTorqueChangeNm: 0, notes: [] },
  );
}

export const SUN_SPEC: SyntheticSpec = { name: 'syn-sun', maxSpeedRpm: 12000, peakNm: 140, cornerRpm: 4200 };
export const RING_SPEC: SyntheticSpec = {
  name: 'syn-ring',
  maxSpeedRpm: 7000,
  peakNm: 320,
  cornerRpm: 2600,
  c0: 220,
  c1: 0.4,
  c2: 0.002,
  c3: 0.02,
  bumpW: 200,
  speedSteps: 19,
  torqueSteps: 31,
};

export const BASE_DOC: DrivetrainInput = {
  description: 'synthetic test drivetrain (invented data)',
  sunMachine: 'syn-sun',
  ringMachine: 'syn-ring',
  gearset: { sunTeeth: 30, ringTeeth: 78, planets: 3, baseEfficiency: 0.975 },
  finalDrive: { ratio: 4.2, efficiency: 0.97 },
  wheelRadiusM: 0.33,
  devices: {
    ringBrake: { engagedW: 0, releasedW: 12, maxTorqueNm: 700 },
    sunBrake: { engagedW: 25, releasedW: 0, maxTorqueNm: 260 },
    lockClutch: { engagedW: 30, releasedW: 0, maxTorqueNm: 120 },
  },
  battery: { maxDischargeW: 90_000, maxChargeW: 45_000 },
  auxiliaryW: 300,
};

export function makeDrivetrain(doc: DrivetrainInput = BASE_DOC, maps: MachineMap[] = [syntheticMap(SUN_SPEC), syntheticMap(RING_SPEC)]): Drivetrain {
  const byName = new Map(maps.map((m) => [m.name, m]));
  return buildDrivetrain('syn-axle', doc, (n) => byName.get(n));
}
