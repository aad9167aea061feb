/**
 * Design sweeps: every design of a sweep (src/vehicle/sweepSpec.ts) is built as a variant of the
 * base drivetrain, runs every cycle and the launch/top-speed check, and is ranked by its
 * weighted mean Wh/km among the designs that meet the constraints.
 *
 * Rows come out in design-index order whether a sweep runs whole or in shards;
 * {@link mergeSweepRows} joins shard outputs and ranks them again, giving the same rows as an
 * unsharded run.
 */
import { ModelError } from '../problem.js';
import type { MachineMap } from '../machine/map.js';
import { scaleMachineTorque } from '../machine/scale.js';
import { buildDrivetrain, type Drivetrain, type DrivetrainDoc } from '../solver/drivetrain.js';
import { runCycle } from './cycleEnergy.js';
import { launchCheck } from './launch.js';
import { resolveCycle, type Cycle } from './schema.js';
import type { SweepDesign, SweepSpec } from './sweepSpec.js';

export interface SweepCycleFigures {
  cycle: string;
  batteryWh: number;
  whPerKm: number | null;
  unfollowedSteps: number;
}

/** One design's figures: the design's own values, then what it achieved. */
export interface SweepRow extends SweepDesign {
  /** k = Zr/Zs. */
  k: number;
  launchWheelTorqueNm: number;
  topSpeedKph: number;
  cycles: SweepCycleFigures[];
  /** Weighted mean Wh/km over the cycles; null when some cycle covers no distance. */
  weightedWhPerKm: number | null;
  unfollowedSteps: number;
  meetsConstraints: boolean;
  /** Constraints the design breaks, e.g. `launch 1800 < 2000 N·m`. */
  violations: string[];
  /** 1 = best among the designs that meet the constraints; null for the others. */
  rank: number | null;
  /** Set when the design could not be built or run (it then meets no constraint). */
  error?: string;
}

/** Names the variant drivetrain gives its (possibly scaled) machines. */
const SUN_NAME = 'sweep-sun';
const RING_NAME = 'sweep-ring';

/** The drivetrain of one design: base document with the design's gear set, final drive and scaled machines. */
export function buildDesignDrivetrain(
  base: DrivetrainDoc,
  design: SweepDesign,
  getMachine: (name: string) => MachineMap | undefined,
): Drivetrain {
  const sun = getMachine(base.sunMachine);
  if (!sun) throw new ModelError('unknown-machine', `no machine named "${base.sunMachine}"`, 'sweep.drivetrain.sunMachine');
  const ring = getMachine(base.ringMachine);
  if (!ring) throw new ModelError('unknown-machine', `no machine named "${base.ringMachine}"`, 'sweep.drivetrain.ringMachine');
  const maps = new Map<string, MachineMap>([
    [SUN_NAME, scaleMachineTorque(sun, design.sunTorqueScale)],
    [RING_NAME, scaleMachineTorque(ring, design.ringTorqueScale)],
  ]);
  const doc: DrivetrainDoc = {
    ...base,
    sunMachine: SUN_NAME,
    ringMachine: RING_NAME,
    gearset: { ...base.gearset, sunTeeth: design.sunTeeth, ringTeeth: design.ringTeeth, planets: design.planets },
    finalDrive: { ...base.finalDrive, ratio: design.finalDriveRatio },
  };
  return buildDrivetrain('sweep-design', doc, (n) => maps.get(n));
}

/** Runs one design: launch and top-speed check, every cycle, constraints. */
export function runSweepDesign(spec: SweepSpec, cycles: Cycle[], design: SweepDesign, getMachine: (name: string) => MachineMap | undefined): SweepRow {
  const row: SweepRow = {
    index: design.index,
    id: design.id,
    sunTeeth: design.sunTeeth,
    ringTeeth: design.ringTeeth,
    planetTeeth: design.planetTeeth,
    planets: design.planets,
    k: design.ringTeeth / design.sunTeeth,
    finalDriveRatio: design.finalDriveRatio,
    sunTorqueScale: design.sunTorqueScale,
    ringTorqueScale: design.ringTorqueScale,
    launchWheelTorqueNm: 0,
    topSpeedKph: 0,
    cycles: [],
    weightedWhPerKm: null,
    unfollowedSteps: 0,
    meetsConstraints: false,
    violations: [],
    rank: null,
  };
  let dt: Drivetrain;
  try {
    dt = buildDesignDrivetrain(spec.drivetrain, design, getMachine);
  } catch (err) {
    if (!(err instanceof ModelError) || err.code === 'unknown-machine') throw err;
    row.error = err.message;
    row.violations.push('design could not be built');
    return row;
  }
  const solve = spec.modes ? { modes: spec.modes } : {};
  const launch = launchCheck(dt, spec.vehicle, solve);
  row.launchWheelTorqueNm = launch.launchWheelTorqueNm;
  row.topSpeedKph = launch.topSpeedKph;
  let weighted = 0;
  let weights = 0;
  let defined = true;
  for (let c = 0; c < cycles.length; c++) {
    const r = runCycle(dt, spec.vehicle, cycles[c]!, { solve });
    row.cycles.push({ cycle: r.cycle, batteryWh: r.batteryWh, whPerKm: r.whPerKm, unfollowedSteps: r.unfollowed.length });
    row.unfollowedSteps += r.unfollowed.length;
    const w = spec.cycles[c]!.weight;
    if (r.whPerKm === null) defined = false;
    else weighted += w * r.whPerKm;
    weights += w;
  }
  row.weightedWhPerKm = defined ? weighted / weights : null;
  const k = spec.constraints;
  if (k.minLaunchWheelTorqueNm !== undefined && row.launchWheelTorqueNm < k.minLaunchWheelTorqueNm) {
    row.violations.push(`launch ${round(row.launchWheelTorqueNm)} < ${k.minLaunchWheelTorqueNm} N·m`);
  }
  if (k.minTopSpeedKph !== undefined && row.topSpeedKph < k.minTopSpeedKph) {
    row.violations.push(`top speed ${round(row.topSpeedKph)} < ${k.minTopSpeedKph} km/h`);
  }
  if (row.unfollowedSteps > k.maxUnfollowedSteps) {
    row.violations.push(`${row.unfollowedSteps} unfollowed steps > ${k.maxUnfollowedSteps}`);
  }
  if (row.weightedWhPerKm === null) row.violations.push('Wh/km undefined (a cycle covers no distance)');
  row.meetsConstraints = row.violations.length === 0;
  return row;
}

function round(x: number): number {
  return Math.round(x * 10) / 10;
}

/**
 * Ranks rows in place: designs meeting the constraints by weighted Wh/km ascending (ties by
 * index) get ranks 1, 2, …; the others get null. Returns the rows sorted by index.
 */
export function rankSweepRows(rows: SweepRow[]): SweepRow[] {
  rows.sort((a, b) => a.index - b.index);
  const ok = rows.filter((r) => r.meetsConstraints).sort((a, b) => a.weightedWhPerKm! - b.weightedWhPerKm! || a.index - b.index);
  for (const r of rows) r.rank = null;
  ok.forEach((r, i) => {
    r.rank = i + 1;
  });
  return rows;
}

/** The sweep's cycles, validated. */
export function resolveSweepCycles(spec: SweepSpec): Cycle[] {
  return spec.cycles.map((c, i) => resolveCycle(c.cycle, `sweep.cycles[${i}].cycle`));
}

/**
 * Runs the given designs of a sweep (all of them, or one shard's). `onProgress(done, total)` is
 * called after each design. Rows come back in index order, ranked within this set.
 */
export function runSweep(
  spec: SweepSpec,
  designs: readonly SweepDesign[],
  getMachine: (name: string) => MachineMap | undefined,
  onProgress?: (done: number, total: number) => void,
): SweepRow[] {
  const cycles = resolveSweepCycles(spec);
  const rows: SweepRow[] = [];
  for (const d of designs) {
    rows.push(runSweepDesign(spec, cycles, d, getMachine));
    onProgress?.(rows.length, designs.length);
  }
  return rankSweepRows(rows);
}

/**
 * Joins the rows of several shard runs into the order of an unsharded run and ranks them again
 * over the whole set. A design index appearing twice is an error.
 */
export function mergeSweepRows(rowsLists: readonly (readonly SweepRow[])[]): SweepRow[] {
  const seen = new Set<number>();
  const all: SweepRow[] = [];
  for (const list of rowsLists) {
    for (const r of list) {
      if (seen.has(r.index)) throw new ModelError('sweep-invalid', `design ${r.index} (${r.id}) appears in more than one shard`, 'shards');
      seen.add(r.index);
      all.push({ ...r, cycles: r.cycles.map((c) => ({ ...c })), violations: [...r.violations] });
    }
  }
  return rankSweepRows(all);
}

export { expandSweep, parseSweepSpec, rejectedGearsets, shardDesigns, sweepSpecSchema } from './sweepSpec.js';
export type { SweepDesign, SweepSpec, SweepSpecInput } from './sweepSpec.js';
export { sweepRowsToCsv } from './sweepCsv.js';
