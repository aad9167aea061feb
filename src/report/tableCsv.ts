/**
 * Lookup table as CSV in long format: a header line, then one row per cell in row-major order
 * (speed outer, torque inner). Numbers are written in the shortest form that reads back to the
 * same double (also −0); null values are empty fields; `feasible` is `true`/`false`; `mode` is the mode
 * name, empty when infeasible. Lines end with LF.
 */
import { parse } from 'csv-parse/sync';
import { ModelError } from '../problem.js';
import { TABLE_CAUTION } from './caution.js';
import { CELL_FLOAT_FIELDS, modeFromCode, type LookupTable, type TableCell } from '../solver/tableResult.js';
import { MODES, type Mode } from '../solver/types.js';

export const TABLE_CSV_COLUMNS = ['wheelSpeedRpm', 'wheelTorqueNm', 'feasible', 'mode', ...CELL_FLOAT_FIELDS] as const;

/** A double in its shortest text; `-0` for negative zero. */
function num(x: number): string {
  return Object.is(x, -0) ? '-0' : String(x);
}

/** A cell value: as {@link num}, empty for NaN (no value). */
function cellNum(x: number): string {
  return Number.isNaN(x) ? '' : num(x);
}

/** Mode name of each mode code (empty for no mode). */
const MODE_TEXT: readonly string[] = Array.from({ length: 256 }, (_, code) => modeFromCode(code) ?? '');

export function tableToCsv(t: LookupTable): string {
  // Comment lines first (readers skip `#` lines): the caution and what the table was made from.
  const out: string[] = [
    `# ${TABLE_CAUTION}\n`,
    `# drivetrain ${t.drivetrain}; content hash ${t.hash ?? 'none'}; parameters ${JSON.stringify(t.parameters)}\n`,
    `# units: wheel speed rpm, torques N·m, speeds rpm, battery power W (discharge > 0), efficiency 0..1; empty = not applicable\n`,
    `${TABLE_CSV_COLUMNS.join(',')}\n`,
  ];
  // One row per cell (speed outer, torque inner), written straight from the typed arrays.
  const c = t.cells;
  const fields = CELL_FLOAT_FIELDS.map((f) => c[f]);
  const torqueText = Array.from(t.torqueNm, num);
  const parts: string[] = new Array(4 + fields.length);
  const lines: string[] = new Array(t.nTorque + 1).fill('');
  for (let i = 0; i < t.nSpeed; i++) {
    parts[0] = num(t.speedRpm[i]!);
    for (let j = 0; j < t.nTorque; j++) {
      const k = i * t.nTorque + j;
      parts[1] = torqueText[j]!;
      parts[2] = c.feasible[k] === 1 ? 'true' : 'false';
      parts[3] = MODE_TEXT[c.mode[k]!]!;
      for (let f = 0; f < fields.length; f++) parts[4 + f] = cellNum(fields[f]![k]!);
      lines[j] = parts.join(',');
    }
    out.push(lines.join('\n')); // the empty last entry ends the row's last line
  }
  return out.join('');
}

function fail(message: string, path: string): never {
  throw new ModelError('table-invalid', message, path);
}

function parseNum(s: string, path: string, nullable: boolean): number | null {
  if (s === '') {
    if (nullable) return null;
    fail('value is required', path);
  }
  const v = Number(s);
  if (!Number.isFinite(v) || s.trim() !== s) fail(`"${s}" is not a number`, path);
  return v;
}

/** Reads CSV written by {@link tableToCsv} back into cells (checks the header and every field). */
export function parseTableCsv(text: string): TableCell[] {
  let records: string[][];
  try {
    records = parse(text, { relax_column_count: false, skip_empty_lines: true, comment: '#' }) as string[][];
  } catch (err) {
    fail(`the CSV cannot be read: ${(err as Error).message}`, 'csv');
  }
  if (records.length === 0) fail('the CSV is empty', 'header');
  const header = records[0]!;
  if (header.join(',') !== TABLE_CSV_COLUMNS.join(',')) fail(`header must be ${TABLE_CSV_COLUMNS.join(',')}`, 'header');
  const cells: TableCell[] = [];
  for (let r = 1; r < records.length; r++) {
    const f = records[r]!;
    const p = (col: string): string => `row[${r}].${col}`;
    if (f[2] !== 'true' && f[2] !== 'false') fail(`feasible must be true or false, not "${f[2]}"`, p('feasible'));
    const mode = f[3]!;
    if (mode !== '' && !(MODES as readonly string[]).includes(mode)) fail(`unknown mode "${mode}"`, p('mode'));
    const cell: TableCell = {
      wheelSpeedRpm: parseNum(f[0]!, p('wheelSpeedRpm'), false)!,
      wheelTorqueNm: parseNum(f[1]!, p('wheelTorqueNm'), false)!,
      feasible: f[2] === 'true',
      mode: mode === '' ? null : (mode as Mode),
      sunSpeedRpm: null,
      sunTorqueNm: null,
      ringSpeedRpm: null,
      ringTorqueNm: null,
      batteryW: null,
      systemEfficiency: null,
      frictionBrakeNm: null,
    };
    CELL_FLOAT_FIELDS.forEach((name, k) => {
      cell[name] = parseNum(f[4 + k]!, p(name), true);
    });
    cells.push(cell);
  }
  return cells;
}
