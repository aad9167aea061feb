/**
 * Reference text of a lookup table: the CSV and C header writers (and the C float literal) as
 * they were before they were made faster — one `toPrecision` after another for each float, one
 * object per CSV row. Tests check that the fast writers give exactly these bytes. The C header's
 * preamble (comment, guard, sizes, enum), which the speed-up did not touch, is the writer's own.
 */
import { TABLE_CAUTION } from '../../src/report/caution.js';
import { cHeaderPreamble, cPrefix, snake } from '../../src/report/cHeader.js';
import { CELL_FLOAT_FIELDS, tableCell, type LookupTable, type TableCell } from '../../src/solver/tableResult.js';

const TABLE_CSV_COLUMNS = ['wheelSpeedRpm', 'wheelTorqueNm', 'feasible', 'mode', ...CELL_FLOAT_FIELDS] as const;
const C_NO_VALUE_LITERAL = '(-1.0e30f)';

/** Largest finite float (FLT_MAX); values beyond it are clamped. */
const FLT_MAX = 3.4028234663852886e38;
const PER_LINE = 8;

/** A double as a C float literal with the fewest significant digits that give the same float. */
export function referenceCFloat(x: number): string {
  if (Number.isNaN(x)) return C_NO_VALUE_LITERAL;
  let f = Math.fround(x);
  if (!Number.isFinite(f)) f = x > 0 ? FLT_MAX : -FLT_MAX;
  let s = '';
  for (let p = 1; p <= 9; p++) {
    s = String(Number(f.toPrecision(p)));
    if (Math.fround(Number(s)) === f) break;
  }
  if (!s.includes('.') && !s.includes('e')) s += '.0';
  return `${s}f`;
}

function* values1(list: string[], indent: string): Generator<string> {
  for (let k = 0; k < list.length; k += PER_LINE) {
    const last = k + PER_LINE >= list.length;
    yield `${indent}${list.slice(k, k + PER_LINE).join(', ')}${last ? '' : ','}\n`;
  }
}

function* array1(decl: string, values: ArrayLike<number>, fmt: (x: number) => string): Generator<string> {
  yield `${decl} = {\n`;
  yield* values1(Array.from(values, fmt), '  ');
  yield '};\n\n';
}

function* array2(decl: string, t: LookupTable, values: ArrayLike<number>, fmt: (x: number) => string): Generator<string> {
  yield `${decl} = {\n`;
  for (let i = 0; i < t.nSpeed; i++) {
    yield '  {\n';
    const row: string[] = [];
    for (let j = 0; j < t.nTorque; j++) row.push(fmt(values[i * t.nTorque + j]!));
    yield* values1(row, '    ');
    yield i + 1 < t.nSpeed ? '  },\n' : '  }\n';
  }
  yield '};\n\n';
}

function* tableCHeaderChunks(t: LookupTable): Generator<string> {
  // The preamble (comment, guard, sizes, enum) is the writer's own: only the arrays changed.
  yield cHeaderPreamble(t);
  const P = cPrefix(t.drivetrain);
  const p = P.toLowerCase();
  const NS = `${P}_N_SPEED`;
  const NT = `${P}_N_TORQUE`;
  const F = `static const float ${P}_UNUSED`;
  const U = `static const uint8_t ${P}_UNUSED`;
  yield* array1(`${F} ${p}_speed_rpm[${NS}]`, t.speedRpm, referenceCFloat);
  yield* array1(`${F} ${p}_torque_nm[${NT}]`, t.torqueNm, referenceCFloat);
  yield* array1(`${F} ${p}_max_motoring_wheel_nm[${NS}]`, t.envelope.maxMotoringWheelNm, referenceCFloat);
  yield* array1(`${F} ${p}_max_braking_wheel_nm[${NS}]`, t.envelope.maxBrakingWheelNm, referenceCFloat);
  yield* array2(`${U} ${p}_feasible[${NS}][${NT}]`, t, t.cells.feasible, String);
  yield* array2(`${U} ${p}_mode[${NS}][${NT}]`, t, t.cells.mode, String);
  for (const f of CELL_FLOAT_FIELDS) yield* array2(`${F} ${p}_${snake(f)}[${NS}][${NT}]`, t, t.cells[f], referenceCFloat);
  yield `#endif /* ${P}_TABLE_H */\n`;
}

export function referenceTableCHeader(t: LookupTable): string {
  let out = '';
  for (const chunk of tableCHeaderChunks(t)) out += chunk;
  return out;
}

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

function* tableCsvLines(t: LookupTable): Generator<string> {
  // Comment lines first (readers skip `#` lines): the caution and what the table was made from.
  yield `# ${TABLE_CAUTION}\n`;
  yield `# drivetrain ${t.drivetrain}; content hash ${t.hash ?? 'none'}; parameters ${JSON.stringify(t.parameters)}\n`;
  yield `# units: wheel speed rpm, torques N·m, speeds rpm, battery power W (discharge > 0), efficiency 0..1; empty = not applicable\n`;
  yield `${TABLE_CSV_COLUMNS.join(',')}\n`;
  for (let i = 0; i < t.nSpeed; i++) {
    for (let j = 0; j < t.nTorque; j++) yield `${row(tableCell(t, i, j))}\n`;
  }
}

export function referenceTableCsv(t: LookupTable): string {
  let out = '';
  for (const line of tableCsvLines(t)) out += line;
  return out;
}
