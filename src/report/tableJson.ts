/**
 * Lookup table as JSON. Cells are column arrays nested [speed][torque] — `cells.batteryW[i][j]`
 * is the value at `axes.speedRpm[i]`, `axes.torqueNm[j]` — the same layout as the C header.
 * null marks values that do not exist (infeasible cells; efficiency where undefined).
 */
import { MODES } from '../solver/types.js';
import {
  CELL_FLOAT_FIELDS,
  FIELD_UNITS,
  modeFromCode,
  nullIfNaN,
  type CellFloatField,
  type LookupTable,
  type SmoothnessReport,
  type TableParameters,
} from '../solver/tableResult.js';
import { TABLE_CAUTION } from './caution.js';

export interface TableJson {
  kind: 'lookup-table';
  drivetrain: string;
  hash: string | null;
  generatedAt: string;
  parameters: TableParameters;
  layout: string;
  units: Record<string, string>;
  modes: string[];
  axes: { speedRpm: number[]; torqueNm: number[] };
  envelope: { maxMotoringWheelNm: (number | null)[]; maxBrakingWheelNm: (number | null)[] };
  cells: {
    feasible: boolean[][];
    mode: (string | null)[][];
  } & Record<CellFloatField, (number | null)[][]>;
  smoothness: SmoothnessReport;
  caution: string;
}

function grid<T>(t: LookupTable, at: (k: number) => T): T[][] {
  const out: T[][] = [];
  for (let i = 0; i < t.nSpeed; i++) {
    const row: T[] = new Array(t.nTorque);
    for (let j = 0; j < t.nTorque; j++) row[j] = at(i * t.nTorque + j);
    out.push(row);
  }
  return out;
}

export function tableToJson(t: LookupTable): TableJson {
  const c = t.cells;
  const cells = {
    feasible: grid(t, (k) => c.feasible[k] === 1),
    mode: grid(t, (k) => modeFromCode(c.mode[k]!)),
  } as TableJson['cells'];
  for (const f of CELL_FLOAT_FIELDS) cells[f] = grid(t, (k) => nullIfNaN(c[f][k]!));
  return {
    kind: 'lookup-table',
    drivetrain: t.drivetrain,
    hash: t.hash,
    generatedAt: t.generatedAt,
    parameters: t.parameters,
    layout: 'cells.<field>[i][j] is the value at axes.speedRpm[i] (wheel speed) and axes.torqueNm[j] (wheel torque); envelope arrays follow axes.speedRpm',
    units: {
      speedRpm: 'rpm (wheel)',
      torqueNm: 'N·m (wheel; negative = braking)',
      maxMotoringWheelNm: 'N·m at the wheel, >= 0',
      maxBrakingWheelNm: 'N·m at the wheel, magnitude >= 0',
      ...FIELD_UNITS,
    },
    modes: [...MODES],
    axes: { speedRpm: Array.from(t.speedRpm), torqueNm: Array.from(t.torqueNm) },
    envelope: {
      maxMotoringWheelNm: Array.from(t.envelope.maxMotoringWheelNm, nullIfNaN),
      maxBrakingWheelNm: Array.from(t.envelope.maxBrakingWheelNm, nullIfNaN),
    },
    cells,
    smoothness: t.smoothness,
    caution: TABLE_CAUTION,
  };
}
