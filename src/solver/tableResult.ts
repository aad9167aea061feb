/**
 * The in-memory lookup table: axes, cells stored field by field in typed arrays (row-major,
 * cell (i, j) at index i·nTorque + j for speed i and torque j), the wheel-torque envelope per
 * speed, and the generation record. Float fields hold NaN where the value is null (infeasible
 * cells; system efficiency where undefined). Float64 keeps each cell an exact copy of the
 * per-point answer.
 */
import { MODES, type Mode } from './types.js';
import type { TableAxisSpec } from './tableSpec.js';

/** Mode codes in the typed arrays and generated code: 0 = no feasible mode, then MODES in order. */
export const MODE_NONE = 0;
export function modeCode(mode: Mode): number {
  return MODES.indexOf(mode) + 1;
}
export function modeFromCode(code: number): Mode | null {
  return code >= 1 && code <= MODES.length ? MODES[code - 1]! : null;
}

/** Float fields of a cell, in output order, with their units. */
export const CELL_FLOAT_FIELDS = [
  'sunSpeedRpm',
  'sunTorqueNm',
  'ringSpeedRpm',
  'ringTorqueNm',
  'batteryW',
  'systemEfficiency',
  'frictionBrakeNm',
] as const;
export type CellFloatField = (typeof CELL_FLOAT_FIELDS)[number];

export const FIELD_UNITS: Record<CellFloatField, string> = {
  sunSpeedRpm: 'rpm',
  sunTorqueNm: 'N·m',
  ringSpeedRpm: 'rpm',
  ringTorqueNm: 'N·m',
  batteryW: 'W (discharge > 0, charge < 0)',
  systemEfficiency: 'fraction 0..1',
  frictionBrakeNm: 'N·m at the wheel, magnitude',
};

export type TableCells = { feasible: Uint8Array; mode: Uint8Array } & Record<CellFloatField, Float64Array>;

export function allocateCells(n: number): TableCells {
  const cells = { feasible: new Uint8Array(n), mode: new Uint8Array(n) } as TableCells;
  for (const f of CELL_FLOAT_FIELDS) cells[f] = new Float64Array(n).fill(Number.NaN);
  return cells;
}

/** Largest wheel torques per speed of the axis, N·m, both magnitudes >= 0. */
export interface TableEnvelope {
  maxMotoringWheelNm: Float64Array;
  maxBrakingWheelNm: Float64Array;
}

/** How smooth the mode map is and what the mode-switch margin did (see tableSmooth.ts). */
export interface SmoothnessReport {
  modeSwitchMarginW: number;
  /** Neighbouring pairs of feasible cells (both axes) whose modes differ, in this table. */
  modeChanges: number;
  modeChangesAlongSpeed: number;
  modeChangesAlongTorque: number;
  /** The same count for the plain optimum (margin 0). */
  modeChangesWithoutMargin: number;
  /** Cells that use a mode other than their optimum. */
  cellsReassigned: number;
  /** Largest battery power above the optimum among reassigned cells, W (0 if none). */
  maxExtraBatteryW: number;
  /** Largest difference between neighbouring feasible cells (both axes). */
  maxJump: { sunSpeedRpm: number; sunTorqueNm: number; ringTorqueNm: number };
}

/** Everything that was asked for, recorded with the table. */
export interface TableParameters {
  speedAxis: TableAxisSpec;
  torqueAxis: TableAxisSpec;
  modes: Mode[] | null;
  strict: boolean;
  modeSwitchMarginW: number;
}

export interface LookupTable {
  drivetrain: string;
  /** Content hash of drivetrain document, machine documents and request (supplied by the caller). */
  hash: string | null;
  /** ISO 8601 time of generation. */
  generatedAt: string;
  parameters: TableParameters;
  nSpeed: number;
  nTorque: number;
  /** Wheel speed axis, rpm. */
  speedRpm: Float64Array;
  /** Wheel torque axis, N·m. */
  torqueNm: Float64Array;
  cells: TableCells;
  envelope: TableEnvelope;
  smoothness: SmoothnessReport;
}

/** One cell as a plain object (null where the typed array holds NaN). */
export interface TableCell {
  wheelSpeedRpm: number;
  wheelTorqueNm: number;
  feasible: boolean;
  mode: Mode | null;
  sunSpeedRpm: number | null;
  sunTorqueNm: number | null;
  ringSpeedRpm: number | null;
  ringTorqueNm: number | null;
  batteryW: number | null;
  systemEfficiency: number | null;
  frictionBrakeNm: number | null;
}

export function nullIfNaN(x: number): number | null {
  return Number.isNaN(x) ? null : x;
}

/** Cell at speed index i, torque index j. */
export function tableCell(t: LookupTable, i: number, j: number): TableCell {
  const k = i * t.nTorque + j;
  const c = t.cells;
  return {
    wheelSpeedRpm: t.speedRpm[i]!,
    wheelTorqueNm: t.torqueNm[j]!,
    feasible: c.feasible[k] === 1,
    mode: modeFromCode(c.mode[k]!),
    sunSpeedRpm: nullIfNaN(c.sunSpeedRpm[k]!),
    sunTorqueNm: nullIfNaN(c.sunTorqueNm[k]!),
    ringSpeedRpm: nullIfNaN(c.ringSpeedRpm[k]!),
    ringTorqueNm: nullIfNaN(c.ringTorqueNm[k]!),
    batteryW: nullIfNaN(c.batteryW[k]!),
    systemEfficiency: nullIfNaN(c.systemEfficiency[k]!),
    frictionBrakeNm: nullIfNaN(c.frictionBrakeNm[k]!),
  };
}

/** The modes that occur in a table, in MODES order. */
export function modesPresent(t: LookupTable): Mode[] {
  const seen = new Uint8Array(MODES.length + 1);
  for (let k = 0; k < t.cells.mode.length; k++) seen[t.cells.mode[k]!] = 1;
  return MODES.filter((m) => seen[modeCode(m)] === 1);
}
