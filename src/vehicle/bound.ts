/**
 * Cycle-optimal bound over mode sequences (DESIGN.md §7). The step-by-step optimum picks the
 * least-battery-power mode in every step on its own; a real controller pays for each mode switch
 * (a brake or clutch actuation, a speed synchronisation). With a cost per switch in Wh, the least
 * total energy of any mode sequence comes from dynamic programming over the per-step, per-mode
 * battery energies (src/vehicle/modeSequence.ts). The step-by-step optimum, charged for the
 * switches it makes, can only lie at or above that bound; with zero switch cost the two are equal.
 *
 * Per-mode energies come from the per-point answer (its setting and the best setting of every
 * other mode at the same electric wheel torque); a mode with no feasible setting at a step is
 * unavailable there. A step where no mode had a setting costs the same in every mode.
 */
import { MODES, type Mode } from '../solver/types.js';
import type { Drivetrain } from '../solver/drivetrain.js';
import { runCycle, type CycleResult, type CycleRunOptions } from './cycleEnergy.js';
import { bestModeSequence } from './modeSequence.js';
import type { Cycle, Vehicle } from './schema.js';

export interface CycleBound {
  /** Cost charged per mode switch, Wh. */
  switchCostWh: number;
  /** Least total (battery energy + switch costs) of any mode sequence, Wh. */
  boundWh: number;
  /** Battery energy of that sequence, Wh, and its number of switches. */
  boundEnergyWh: number;
  boundSwitches: number;
  /** Step-by-step optimum: battery energy + its switches × cost, Wh. */
  stepwiseWh: number;
  stepwiseEnergyWh: number;
  stepwiseSwitches: number;
  /** stepwiseWh − boundWh (>= 0), Wh, and as a share of the bound, %. */
  gapWh: number;
  gapPct: number | null;
  /** Time in each mode along the bound's sequence, s. */
  boundModeTimeS: Partial<Record<Mode, number>>;
}

/** Step-by-step switches: changes of mode between steps that have one (steps without a setting are skipped). */
function stepwiseSwitches(modeIndex: Int8Array): number {
  let last = -1;
  let n = 0;
  for (let k = 0; k < modeIndex.length; k++) {
    const m = modeIndex[k]!;
    if (m < 0) continue;
    if (last >= 0 && m !== last) n++;
    last = m;
  }
  return n;
}

/** Bound from a cycle run made with `modeEnergies: true` (per-mode energies, modes and step durations). */
export function boundFromRun(run: CycleResult, switchCostWh = 0): CycleBound {
  if (!run.modeEnergyWh || !run.modeIndex || !run.stepDurationS) throw new RangeError('the cycle run lacks per-mode energies (run it with modeEnergies: true)');
  const steps = run.steps;
  const nm = MODES.length;
  const seq = bestModeSequence(run.modeEnergyWh, steps, nm, switchCostWh);
  let stepwiseEnergyWh = 0;
  for (let k = 0; k < steps; k++) {
    const m = run.modeIndex[k]!;
    stepwiseEnergyWh += run.modeEnergyWh[k * nm + (m < 0 ? 0 : m)]!;
  }
  const switches = stepwiseSwitches(run.modeIndex);
  const stepwiseWh = stepwiseEnergyWh + switches * switchCostWh;
  const durations = run.stepDurationS;
  const boundModeTimeS: Partial<Record<Mode, number>> = {};
  for (let k = 0; k < steps; k++) {
    const mode = MODES[seq.modes[k]!]!;
    boundModeTimeS[mode] = (boundModeTimeS[mode] ?? 0) + durations[k]!;
  }
  const gapWh = Math.max(0, stepwiseWh - seq.totalWh);
  return {
    switchCostWh,
    boundWh: seq.totalWh,
    boundEnergyWh: seq.energyWh,
    boundSwitches: seq.switches,
    stepwiseWh,
    stepwiseEnergyWh,
    stepwiseSwitches: switches,
    gapWh,
    gapPct: seq.totalWh !== 0 ? (100 * gapWh) / Math.abs(seq.totalWh) : null,
    boundModeTimeS,
  };
}

export interface CycleBoundOptions extends Omit<CycleRunOptions, 'modeEnergies' | 'series'> {
  /** Cost per mode switch, Wh (default 0). */
  switchCostWh?: number;
}

/** Runs the cycle and returns the bound for each of the given switch costs (Wh). */
export function cycleBounds(dt: Drivetrain, vehicle: Vehicle, cycle: Cycle, switchCostsWh: readonly number[], opts: Omit<CycleBoundOptions, 'switchCostWh'> = {}): CycleBound[] {
  const run = runCycle(dt, vehicle, cycle, { ...opts, modeEnergies: true });
  return switchCostsWh.map((c) => boundFromRun(run, c));
}

/** Runs the cycle and returns its cycle-optimal bound for one switch cost. */
export function cycleBound(dt: Drivetrain, vehicle: Vehicle, cycle: Cycle, opts: CycleBoundOptions = {}): CycleBound {
  const { switchCostWh = 0, ...rest } = opts;
  return cycleBounds(dt, vehicle, cycle, [switchCostWh], rest)[0]!;
}
