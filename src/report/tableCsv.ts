/**
 * Lookup table as CSV in long format: a header line, then one row per cell in row-major order
 * (speed outer, torque inner). Numbers are written in the shortest form that reads back to the
 * same double (also −0); null values are empty fields; `feasible` is `true`/`false`; `mode` is the mode
 * name, empty when infeasible. Lines end with LF.
 */
import { parse } from 'csv-parse/sync';
import { ModelError } from '../problem.js';
import { TABLE_CAUTION } from './caution.js';
import { CELL_FLOAT_FIELDS, tableCell, type LookupTable, type TableCell } from '../solver/tableResult.js';
import { MODES, type Mode } from '../solver/types.js';

export const TABLE_CSV_COLUMNS = ['wheelSpeedRpm', 'wheelTorqueNm', 'feasible', 'mode', ...CELL_FLOAT_FIELDS] as const;

function num(x: number | null): string {
  if (x === null) return '';
  return Object.is(x, -0) ? '-0' : String(x);
}

function row(c: TableCell): string {
  return [
    num(c.wheelSpeedRpm),
    num(c.wheelTorqueNm),
    c.feasible ? 'true' : 'false',
    c.mode ?? '',
    ...CELL_FLOAT_FIELDS.map((f) => num(c[f])),
  ].join(',');
}

/** Lines of the CSV (each with its trailing LF), for streaming large tables. */
export function* tableCsvLines(t: LookupTable): Generator<string> {
  // Comment lines first (readers skip `#` lines): the caution and what the table was made from.
  yield `# ${TABLE_CAUTION}\n`;
  yield `# drivetrain ${t.drivetrain}; content hash ${t.hash ?? 'none'}; parameters ${JSON.stringify(t.parameters)}\n`;
  yield `# units: wheel speed rpm, torques N·m, speeds rpm, battery power W (discharge > 0), efficiency 0..1; empty = not applicable\n`;
  yield `${TABLE_CSV_COLUMNS.join(',')}\n`;
  for (let i = 0; i < t.nSpeed; i++) {
    for (let j = 0; j < t.nTorque; j++) yield `${row(tableCell(t, i, j))}\n`;
  }
}

export function tableToCsv(t: LookupTable): string {
  let out = '';
  for (const line of tableCsvLines(t)) out += line;
  return out;
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
