/**
 * Synthetic machines and a drivetrain for the lookup-table tests (an invented scenario of our
 * own, not any real product). Loss model of the usual textbook form: a standing loss, copper
 * loss ∝ τ², iron loss ∝ ω^1.5 and drag ∝ ω² (common practice for a smooth PM machine map).
 * Envelope: constant torque to a base speed, constant power above it.
 */
import { buildMachineMap, type MachineMap, type MapProvenance } from '../../src/machine/map.js';
import { RAD_S_PER_RPM } from '../../src/units.js';

export interface SyntheticMachine {
  maxTorqueNm: number;
  baseSpeedRpm: number;
  maxSpeedRpm: number;
  standingW: number;
  copperWPerNm2: number;
  ironWPerRadS15: number;
  dragWPerRadS2: number;
  speedSteps: number;
  torqueSteps: number;
}

const PROVENANCE: MapProvenance = {
  source: 'grid',
  filledCells: 0,
  extrapolatedCells: 0,
  zeroSpeedLossChangeW: 0,
  zeroSpeedTorqueChangeNm: 0,
  notes: ['synthetic map for tests'],
};

export function syntheticMap(name: string, m: SyntheticMachine): MachineMap {
  const speedRpm: number[] = [];
  for (let i = 0; i < m.speedSteps; i++) speedRpm.push((m.maxSpeedRpm * i) / (m.speedSteps - 1));
  const torqueNm: number[] = [];
  for (let j = 0; j < m.torqueSteps; j++) torqueNm.push(-m.maxTorqueNm + (2 * m.maxTorqueNm * j) / (m.torqueSteps - 1));
  const env = speedRpm.map((n) => (n <= m.baseSpeedRpm ? m.maxTorqueNm : (m.maxTorqueNm * m.baseSpeedRpm) / n));
  const lossW = speedRpm.map((n) => {
    const w = n * RAD_S_PER_RPM;
    return torqueNm.map((t) => m.standingW + m.copperWPerNm2 * t * t + m.ironWPerRadS15 * w ** 1.5 + m.dragWPerRadS2 * w * w);
  });
  return buildMachineMap(
    name,
    { speedRpm, torqueNm, lossW, maxTorqueNm: env, minTorqueNm: env.map((v) => -v), maxSpeedRpm: m.maxSpeedRpm, reverse: true },
    PROVENANCE,
  );
}

export const SUN_MACHINE: SyntheticMachine = {
  maxTorqueNm: 160,
  baseSpeedRpm: 5000,
  maxSpeedRpm: 14000,
  standingW: 150,
  copperWPerNm2: 0.09,
  ironWPerRadS15: 0.35,
  dragWPerRadS2: 0.0004,
  speedSteps: 15,
  torqueSteps: 17,
};

export const RING_MACHINE: SyntheticMachine = {
  maxTorqueNm: 320,
  baseSpeedRpm: 3000,
  maxSpeedRpm: 7000,
  standingW: 220,
  copperWPerNm2: 0.05,
  ironWPerRadS15: 0.6,
  dragWPerRadS2: 0.0009,
  speedSteps: 13,
  torqueSteps: 17,
};

/** Drivetrain document: Zs 30, Zr 78, 3 planets (Zp = 24, assembly (30+78)/3 = 36), all hold devices. */
export const AXLE_DOC = {
  description: 'Invented test axle',
  sunMachine: 'test-sun',
  ringMachine: 'test-ring',
  gearset: { sunTeeth: 30, ringTeeth: 78, planets: 3, baseEfficiency: 0.975 },
  finalDrive: { ratio: 4.1, efficiency: 0.97 },
  wheelRadiusM: 0.33,
  devices: {
    sunBrake: { engagedW: 0, releasedW: 12 },
    ringBrake: { engagedW: 0, releasedW: 12 },
    lockClutch: { engagedW: 18, releasedW: 0 },
  },
  battery: { maxDischargeW: 160_000, maxChargeW: 90_000 },
  auxiliaryW: 300,
};

export function testMachines(): Map<string, MachineMap> {
  return new Map([
    ['test-sun', syntheticMap('test-sun', SUN_MACHINE)],
    ['test-ring', syntheticMap('test-ring', RING_MACHINE)],
  ]);
}
