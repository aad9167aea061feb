/**
 * Lookup tables (DESIGN.md §6): the battery-optimal setting at every cell of a wheel speed (rpm)
 * × wheel torque (N·m) grid, each cell exactly the per-point answer of {@link solvePoint}, plus
 * the envelope (largest motoring and braking wheel torque at each speed of the axis, from
 * {@link wheelTorqueLimits}), the mode-switch margin (tableSmooth.ts) and a smoothness report.
 *
 * Work is split by rows (speeds): {@link computeRows} solves a block of rows and keeps, besides
 * the optimum, every other mode's setting within the margin; {@link assembleTable} joins blocks,
 * applies the margin and measures smoothness. The worker pool (tablePool.ts) runs the same two
 * steps, so both paths give identical tables.
 */
import type { Drivetrain } from './drivetrain.js';
import { wheelTorqueLimits } from './envelope.js';
import { solvePoint } from './point.js';
import { resolveTableSpec, type ResolvedTableSpec, type TableSpecInput } from './tableSpec.js';
import {
  allocateCells,
  CELL_FLOAT_FIELDS,
  modeCode,
  type LookupTable,
  type SmoothnessReport,
} from './tableResult.js';
import { applyModeMargin, countModeChanges, maxNeighbourJump } from './tableSmooth.js';
import { MODES, type Mode, type ModeSetting, type PointResult, type SolveOptions } from './types.js';

const N_FIELDS = CELL_FLOAT_FIELDS.length;

/** What the row solver needs besides the drivetrain (all plain, serialisable data). */
export interface RowJob {
  speedRpm: Float64Array;
  torqueNm: Float64Array;
  rowStart: number;
  rowEnd: number;
  modes?: Mode[];
  strict: boolean;
  modeSwitchMarginW: number;
}

/**
 * Solved rows [rowStart, rowEnd). Cell fields are row-major within the block; `values` holds the
 * CELL_FLOAT_FIELDS of each cell in turn (N_FIELDS per cell). `alt*` lists the settings of other
 * modes whose battery power is within the margin of the optimum (global cell index, mode code,
 * N_FIELDS values each).
 */
export interface RowBlock {
  rowStart: number;
  rowEnd: number;
  feasible: Uint8Array;
  mode: Uint8Array;
  values: Float64Array;
  maxMotoringWheelNm: Float64Array;
  maxBrakingWheelNm: Float64Array;
  altCell: Int32Array;
  altMode: Uint8Array;
  altValues: Float64Array;
}

export interface TableOptions {
  /** Called after each block of rows with cells done and cells in all. */
  onProgress?: (doneCells: number, totalCells: number) => void;
  /** Content hash of drivetrain document, machine documents and request, carried into outputs. */
  hash?: string;
  /** Cap on cells (default MAX_TABLE_CELLS). */
  maxCells?: number;
}

function writeSetting(s: ModeSetting | PointResult, out: Float64Array, o: number): void {
  out[o] = s.sun!.speedRpm;
  out[o + 1] = s.sun!.torqueNm;
  out[o + 2] = s.ring!.speedRpm;
  out[o + 3] = s.ring!.torqueNm;
  out[o + 4] = s.batteryW!;
  out[o + 5] = s.systemEfficiency ?? Number.NaN;
  out[o + 6] = s.frictionBrakeNm!;
}

export function solveOptionsOf(job: { modes?: Mode[]; strict: boolean; modeSwitchMarginW?: number }): SolveOptions {
  // Other modes' settings are only needed when the mode-switch margin may choose them.
  const opts: SolveOptions = { strict: job.strict, alternatives: (job.modeSwitchMarginW ?? 0) > 0 };
  if (job.modes) opts.modes = job.modes;
  return opts;
}

/** Solves rows [rowStart, rowEnd) of a table; `onRow` is told after each row. */
export function computeRows(dt: Drivetrain, job: RowJob, onRow?: () => void): RowBlock {
  const nT = job.torqueNm.length;
  const rows = job.rowEnd - job.rowStart;
  const n = rows * nT;
  const feasible = new Uint8Array(n);
  const mode = new Uint8Array(n);
  const values = new Float64Array(n * N_FIELDS).fill(Number.NaN);
  const maxMotoringWheelNm = new Float64Array(rows);
  const maxBrakingWheelNm = new Float64Array(rows);
  const altCell: number[] = [];
  const altMode: number[] = [];
  const altValues: number[] = [];
  const scratch = new Float64Array(N_FIELDS);
  const opts = solveOptionsOf(job);
  const margin = job.modeSwitchMarginW;
  for (let r = 0; r < rows; r++) {
    const i = job.rowStart + r;
    const speed = job.speedRpm[i]!;
    const lim = wheelTorqueLimits(dt, speed, opts);
    maxMotoringWheelNm[r] = lim.maxMotoringWheelNm;
    maxBrakingWheelNm[r] = lim.maxBrakingWheelNm;
    for (let j = 0; j < nT; j++) {
      const c = r * nT + j;
      const res = solvePoint(dt, speed, job.torqueNm[j]!, opts);
      if (!res.feasible) continue;
      feasible[c] = 1;
      mode[c] = modeCode(res.mode!);
      writeSetting(res, values, c * N_FIELDS);
      if (!(margin > 0)) continue;
      for (const alt of res.alternatives) {
        if (!(alt.batteryW <= res.batteryW! + margin)) continue;
        writeSetting(alt, scratch, 0);
        altCell.push(i * nT + j);
        altMode.push(modeCode(alt.mode));
        for (let f = 0; f < N_FIELDS; f++) altValues.push(scratch[f]!);
      }
    }
    onRow?.();
  }
  return {
    rowStart: job.rowStart,
    rowEnd: job.rowEnd,
    feasible,
    mode,
    values,
    maxMotoringWheelNm,
    maxBrakingWheelNm,
    altCell: Int32Array.from(altCell),
    altMode: Uint8Array.from(altMode),
    altValues: Float64Array.from(altValues),
  };
}

/** Buffers of a block, for transfer between threads. */
export function blockBuffers(b: RowBlock): ArrayBuffer[] {
  return [b.feasible, b.mode, b.values, b.maxMotoringWheelNm, b.maxBrakingWheelNm, b.altCell, b.altMode, b.altValues].map(
    (a) => a.buffer as ArrayBuffer,
  );
}

/** Joins row blocks (any order, covering every row once), applies the margin, reports smoothness. */
export function assembleTable(name: string, spec: ResolvedTableSpec, blocks: readonly RowBlock[], hash: string | null): LookupTable {
  const nS = spec.speedRpm.length;
  const nT = spec.torqueNm.length;
  const n = nS * nT;
  const cells = allocateCells(n);
  const maxMotoringWheelNm = new Float64Array(nS);
  const maxBrakingWheelNm = new Float64Array(nS);
  const marginW = spec.modeSwitchMarginW;
  // Battery power of each mode per cell (NaN where not feasible or beyond the margin), and where
  // that mode's setting is kept: −1 = the optimum (cell arrays), else an index into alt lists.
  const modeW = marginW > 0 ? new Float64Array(n * MODES.length).fill(Number.NaN) : new Float64Array(0);
  const altRef = marginW > 0 ? new Int32Array(n * MODES.length).fill(-1) : new Int32Array(0);
  const altSources: { block: RowBlock; index: number }[] = [];
  for (const b of blocks) {
    const off = b.rowStart * nT;
    const count = (b.rowEnd - b.rowStart) * nT;
    cells.feasible.set(b.feasible, off);
    cells.mode.set(b.mode, off);
    for (let c = 0; c < count; c++) {
      for (let f = 0; f < N_FIELDS; f++) cells[CELL_FLOAT_FIELDS[f]!][off + c] = b.values[c * N_FIELDS + f]!;
    }
    maxMotoringWheelNm.set(b.maxMotoringWheelNm, b.rowStart);
    maxBrakingWheelNm.set(b.maxBrakingWheelNm, b.rowStart);
    if (marginW > 0) {
      for (let c = 0; c < count; c++) {
        if (b.feasible[c] === 1) modeW[(off + c) * MODES.length + b.mode[c]! - 1] = b.values[c * N_FIELDS + 4]!;
      }
      for (let a = 0; a < b.altCell.length; a++) {
        const slot = b.altCell[a]! * MODES.length + b.altMode[a]! - 1;
        modeW[slot] = b.altValues[a * N_FIELDS + 4]!;
        altRef[slot] = altSources.length;
        altSources.push({ block: b, index: a });
      }
    }
  }

  const best = Uint8Array.from(cells.mode);
  const bestW = Float64Array.from(cells.batteryW);
  const without = countModeChanges(nS, nT, best);
  let cellsReassigned = 0;
  let maxExtraBatteryW = 0;
  if (marginW > 0) {
    const labels = applyModeMargin(nS, nT, best, modeW, marginW);
    for (let c = 0; c < n; c++) {
      if (labels[c] === best[c]) continue;
      const src = altSources[altRef[c * MODES.length + labels[c]! - 1]!]!;
      for (let f = 0; f < N_FIELDS; f++) cells[CELL_FLOAT_FIELDS[f]!][c] = src.block.altValues[src.index * N_FIELDS + f]!;
      cells.mode[c] = labels[c]!;
      cellsReassigned++;
      maxExtraBatteryW = Math.max(maxExtraBatteryW, cells.batteryW[c]! - bestW[c]!);
    }
  }
  const changes = countModeChanges(nS, nT, cells.mode);
  const smoothness: SmoothnessReport = {
    modeSwitchMarginW: marginW,
    modeChanges: changes.alongSpeed + changes.alongTorque,
    modeChangesAlongSpeed: changes.alongSpeed,
    modeChangesAlongTorque: changes.alongTorque,
    modeChangesWithoutMargin: without.alongSpeed + without.alongTorque,
    cellsReassigned,
    maxExtraBatteryW,
    maxJump: {
      sunSpeedRpm: maxNeighbourJump(nS, nT, cells.feasible, cells.sunSpeedRpm),
      sunTorqueNm: maxNeighbourJump(nS, nT, cells.feasible, cells.sunTorqueNm),
      ringTorqueNm: maxNeighbourJump(nS, nT, cells.feasible, cells.ringTorqueNm),
    },
  };
  return {
    drivetrain: name,
    hash,
    generatedAt: new Date().toISOString(),
    parameters: {
      speedAxis: spec.spec.speedRpm,
      torqueAxis: spec.spec.torqueNm,
      modes: spec.modes ?? null,
      strict: spec.strict,
      modeSwitchMarginW: marginW,
    },
    nSpeed: nS,
    nTorque: nT,
    speedRpm: spec.speedRpm,
    torqueNm: spec.torqueNm,
    cells,
    envelope: { maxMotoringWheelNm, maxBrakingWheelNm },
    smoothness,
  };
}

/** The row job covering rows [rowStart, rowEnd) of a resolved request. */
export function rowJob(spec: ResolvedTableSpec, rowStart: number, rowEnd: number): RowJob {
  const job: RowJob = {
    speedRpm: spec.speedRpm,
    torqueNm: spec.torqueNm,
    rowStart,
    rowEnd,
    strict: spec.strict,
    modeSwitchMarginW: spec.modeSwitchMarginW,
  };
  if (spec.modes) job.modes = spec.modes;
  return job;
}

/** Builds a lookup table in this thread. `spec` is a table request (validated here). */
export function buildTable(dt: Drivetrain, spec: TableSpecInput, opts: TableOptions = {}): LookupTable {
  const resolved = resolveTableSpec(spec, opts.maxCells);
  const nS = resolved.speedRpm.length;
  const nT = resolved.torqueNm.length;
  let done = 0;
  const block = computeRows(dt, rowJob(resolved, 0, nS), () => {
    done += nT;
    opts.onProgress?.(done, nS * nT);
  });
  return assembleTable(dt.name, resolved, [block], opts.hash ?? null);
}
