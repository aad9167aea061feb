/**
 * Layout comparison (DESIGN.md §7): the same cycle on restricted versions of one drivetrain.
 *
 * - `sun-alone`: the sun machine drives alone with the ring held (ratio (1 + k)·i_fd);
 * - `ring-alone`: the ring machine drives alone with the sun held (ratio (1 + k)/k·i_fd);
 * - `split-only`: both machines, no hold devices, split mode only;
 * - `full`: the drivetrain as defined, every mode its hardware allows.
 * The single-machine layouts stand for an axle with one machine and a fixed ratio: the brake they
 * need is fitted if the drivetrain lacks it, and all device power (and brake capacity limits) is
 * removed from them, so they pay nothing for hardware they would not have. The idle machine is
 * held and has no loss.
 *
 * Baseline for the savings: the layout with the highest Wh/km among those that follow the whole
 * cycle (no unfollowed step); when none does, the highest Wh/km of all. Savings in % are
 * (baseline − layout)/baseline·100, so the baseline shows 0 and better layouts show > 0.
 */
import type { MachineMap } from '../machine/map.js';
import { buildDrivetrain, type Drivetrain, type DrivetrainDoc } from '../solver/drivetrain.js';
import { MODES, type Mode, type SolveOptions } from '../solver/types.js';
import { runCycle, type CycleResult } from './cycleEnergy.js';
import type { Cycle, Vehicle } from './schema.js';

export const LAYOUTS = ['sun-alone', 'ring-alone', 'split-only', 'full'] as const;
export type Layout = (typeof LAYOUTS)[number];

export interface LayoutRow {
  layout: Layout;
  description: string;
  modes: Mode[];
  batteryWh: number;
  distanceKm: number;
  whPerKm: number | null;
  unfollowedSteps: number;
  shortfallWh: number;
  /** Saving against the baseline, %; null where Wh/km is undefined. */
  savingsPct: number | null;
  baseline: boolean;
}

export interface LayoutComparison {
  cycle: string;
  drivetrain: string;
  baseline: Layout;
  baselineRule: string;
  rows: LayoutRow[];
}

const FREE_BRAKE = { engagedW: 0, releasedW: 0 };

/** The drivetrain document restricted to one layout, and the modes it may use. */
export function layoutVariant(doc: DrivetrainDoc, layout: Layout): { doc: DrivetrainDoc; modes: Mode[]; description: string } {
  const base: DrivetrainDoc = { ...doc };
  delete base.devices;
  switch (layout) {
    case 'sun-alone':
      return {
        doc: { ...base, devices: { ringBrake: { ...FREE_BRAKE } } },
        modes: ['ring-held'],
        description: 'sun machine alone, ring held (brake without power draw)',
      };
    case 'ring-alone':
      return {
        doc: { ...base, devices: { sunBrake: { ...FREE_BRAKE } } },
        modes: ['sun-held'],
        description: 'ring machine alone, sun held (brake without power draw)',
      };
    case 'split-only':
      return { doc: base, modes: ['split'], description: 'both machines in split mode, no hold devices' };
    default:
      return {
        doc,
        modes: [...MODES],
        description: 'the drivetrain as defined, every mode its devices allow',
      };
  }
}

export interface CompareOptions {
  solve?: SolveOptions;
  layouts?: readonly Layout[];
  /**
   * A run already made of the same cycle and vehicle on `dt` itself, with the options of `solve`
   * except `modes`, which must select every mode `dt` allows: the `full` layout would solve each
   * step exactly as that run did, so its figures fill the `full` row instead of a second run.
   */
  fullRun?: CycleResult;
}

/** Runs one cycle on every layout of `dt` and tabulates Wh/km and savings against the baseline. */
export function compareLayouts(dt: Drivetrain, vehicle: Vehicle, cycle: Cycle, opts: CompareOptions = {}): LayoutComparison {
  const maps = new Map<string, MachineMap>([
    [dt.doc.sunMachine, dt.sun],
    [dt.doc.ringMachine, dt.ring],
  ]);
  const rows: LayoutRow[] = [];
  for (const layout of opts.layouts ?? LAYOUTS) {
    const v = layoutVariant(dt.doc, layout);
    const variant = layout === 'full' ? dt : buildDrivetrain(dt.name, v.doc, (n) => maps.get(n));
    const modes = v.modes.filter((m) => variant.modeAvailable[MODES.indexOf(m)]);
    const r = layout === 'full' && opts.fullRun ? opts.fullRun : runCycle(variant, vehicle, cycle, { solve: { ...opts.solve, modes: v.modes } });
    rows.push({
      layout,
      description: v.description,
      modes,
      batteryWh: r.batteryWh,
      distanceKm: r.distanceKm,
      whPerKm: r.whPerKm,
      unfollowedSteps: r.unfollowed.length,
      shortfallWh: r.shortfallWh,
      savingsPct: null,
      baseline: false,
    });
  }
  const followers = rows.filter((r) => r.unfollowedSteps === 0 && r.whPerKm !== null);
  const pool = followers.length > 0 ? followers : rows.filter((r) => r.whPerKm !== null);
  let base = pool[0] ?? rows[0]!;
  for (const r of pool) if (r.whPerKm! > base.whPerKm!) base = r;
  base.baseline = true;
  for (const r of rows) {
    if (r.whPerKm !== null && base.whPerKm !== null && base.whPerKm !== 0) {
      r.savingsPct = (100 * (base.whPerKm - r.whPerKm)) / Math.abs(base.whPerKm); // a net-downhill cycle has negative Wh/km
    }
  }
  return {
    cycle: cycle.name,
    drivetrain: dt.name,
    baseline: base.layout,
    baselineRule: 'highest Wh/km among the layouts that follow the whole cycle (all layouts when none does)',
    rows,
  };
}
