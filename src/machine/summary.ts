/**
 * Summary of a loaded map: peak efficiency and where, torque and power limits, speed range,
 * fit quality and how much of the grid was filled, extrapolated or adjusted on load.
 */
import { efficiencyFromLoss, radSToRpm } from '../units.js';
import type { MachineMap, MapProvenance } from './map.js';

export interface MachineSummary {
  name: string;
  source: MapProvenance['source'];
  grid: { speedNodes: number; torqueNodes: number; cells: number };
  speedRangeRpm: { max: number; reverse: boolean };
  maxTorqueNm: number;
  minTorqueNm: number;
  /** Largest motoring shaft power on the envelope, W. */
  maxPowerW: number;
  /** Largest generating shaft power magnitude on the envelope, W. */
  maxRegenPowerW: number;
  /** Best efficiency over grid nodes inside the envelope (motoring and generating), with where. */
  peakEfficiency: { motoring: EfficiencyPeak | null; generating: EfficiencyPeak | null };
  filledShare: number;
  extrapolatedShare: number;
  zeroSpeedSymmetry: { lossChangeW: number; torqueChangeNm: number };
  fit: NonNullable<MapProvenance['fit']> | null;
  notes: string[];
}

export interface EfficiencyPeak {
  efficiency: number;
  speedRpm: number;
  torqueNm: number;
}

export function summarizeMachine(map: MachineMap): MachineSummary {
  const nS = map.nSpeed;
  const nT = map.nTorque;
  let motoring: EfficiencyPeak | null = null;
  let generating: EfficiencyPeak | null = null;
  let maxPowerW = 0;
  let maxRegenPowerW = 0;
  for (let i = 0; i < nS; i++) {
    const w = map.speedRadS[i]!;
    const hi = map.maxTorqueNm[i]!;
    const lo = map.minTorqueNm[i]!;
    if (w > map.maxSpeedRadS) continue;
    maxPowerW = Math.max(maxPowerW, hi * w);
    maxRegenPowerW = Math.max(maxRegenPowerW, -lo * w);
    for (let j = 0; j < nT; j++) {
      const t = map.torqueNm[j]!;
      if (t > hi || t < lo) continue;
      const p = t * w;
      const eff = efficiencyFromLoss(p, map.lossW[i * nT + j]!);
      if (eff === null) continue;
      const peak = { efficiency: eff, speedRpm: radSToRpm(w), torqueNm: t };
      if (p > 0 && (!motoring || eff > motoring.efficiency)) motoring = peak;
      if (p < 0 && (!generating || eff > generating.efficiency)) generating = peak;
    }
  }
  const cells = nS * nT;
  const p = map.provenance;
  return {
    name: map.name,
    source: p.source,
    grid: { speedNodes: nS, torqueNodes: nT, cells },
    speedRangeRpm: { max: radSToRpm(map.maxSpeedRadS), reverse: map.reverse },
    maxTorqueNm: Math.max(...map.maxTorqueNm),
    minTorqueNm: Math.min(...map.minTorqueNm),
    maxPowerW,
    maxRegenPowerW,
    peakEfficiency: { motoring, generating },
    filledShare: p.filledCells / cells,
    extrapolatedShare: p.extrapolatedCells / cells,
    zeroSpeedSymmetry: { lossChangeW: p.zeroSpeedLossChangeW, torqueChangeNm: p.zeroSpeedTorqueChangeNm },
    fit: p.fit ?? null,
    notes: p.notes,
  };
}
