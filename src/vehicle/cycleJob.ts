/**
 * One drive-cycle job as the service and its workers answer it (DESIGN.md §7): the cycle's
 * energy and, when asked, the layout comparison and the cycle-optimal bounds, with each cycle
 * solved as few times as the answer allows. The run of the cycle records every mode's energy
 * per step when bounds are asked, so the bounds need no run of their own; when that run
 * considers every mode the drivetrain allows, it is also the comparison's `full` layout. The
 * answer equals, bit for bit, what runCycle, compareLayouts and cycleBounds give run one by one.
 */
import { modeMask } from '../solver/modes.js';
import type { Drivetrain } from '../solver/drivetrain.js';
import type { Mode, SolveOptions } from '../solver/types.js';
import { boundFromRun, type CycleBound } from './bound.js';
import { compareLayouts, LAYOUTS, type LayoutComparison } from './compare.js';
import { runCycle, type CycleResult } from './cycleEnergy.js';
import type { Cycle, Vehicle } from './schema.js';

export interface CycleJobOptions {
  /** Only consider these modes (still only those the devices allow). */
  modes?: readonly Mode[];
  /** Also run the cycle on the restricted layouts. */
  compare?: boolean;
  /** Cycle-optimal bound for each of these costs per mode switch, Wh. */
  switchCostsWh?: readonly number[];
  /** Include the per-step series in the result. */
  series?: boolean;
  /** Usable battery energy, Wh: the result then carries the range. */
  usableBatteryWh?: number;
}

/** Plain data only: the result carries no per-mode energy arrays. */
export interface CycleJobAnswer {
  result: CycleResult;
  comparison?: LayoutComparison;
  bounds?: CycleBound[];
}

/**
 * Whether the cycle's own run is the comparison's `full` layout: the solver sees modes only
 * through the mask, so equal masks solve every step alike.
 */
function runIsFullLayout(dt: Drivetrain, modes: readonly Mode[] | undefined): boolean {
  return modeMask(dt, modes) === modeMask(dt);
}

/**
 * Runs of the whole cycle a job solves: its own, and for a comparison every layout but the one
 * that run already is. Bounds come from the cycle's own run and add none.
 */
export function cycleJobRuns(dt: Drivetrain, opts: Pick<CycleJobOptions, 'modes' | 'compare'>): number {
  if (!opts.compare) return 1;
  return 1 + LAYOUTS.length - (runIsFullLayout(dt, opts.modes) ? 1 : 0);
}

/** Runs what a cycle job asks for on `dt`; the answer is plain data (structured-clone and JSON safe). */
export function runCycleJob(dt: Drivetrain, vehicle: Vehicle, cycle: Cycle, opts: CycleJobOptions = {}): CycleJobAnswer {
  const solve: SolveOptions = opts.modes ? { modes: opts.modes } : {};
  const costs = opts.switchCostsWh;
  const result = runCycle(dt, vehicle, cycle, {
    solve,
    series: opts.series ?? false,
    ...(opts.usableBatteryWh !== undefined ? { usableBatteryWh: opts.usableBatteryWh } : {}),
    modeEnergies: costs !== undefined,
  });
  let bounds: CycleBound[] | undefined;
  if (costs) {
    bounds = costs.map((c) => boundFromRun(result, c));
  }
  let comparison: LayoutComparison | undefined;
  if (opts.compare) {
    comparison = compareLayouts(dt, vehicle, cycle, { solve, ...(runIsFullLayout(dt, opts.modes) ? { fullRun: result } : {}) });
  }
  delete result.modeEnergyWh;
  delete result.modeIndex;
  delete result.stepDurationS;
  return { result, ...(comparison ? { comparison } : {}), ...(bounds ? { bounds } : {}) };
}
