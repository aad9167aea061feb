/**
 * CSV serialisation of sweep rows: one header line, one line per design in the given order;
 * per-cycle Wh/km and unfollowed-step columns named after each cycle (in the order of the first
 * row's cycles). Fields containing a comma, quote or line break are quoted (RFC 4180).
 * {@link parseSweepCsv} reads the text back.
 */
import { parse } from 'csv-parse/sync';
import { ModelError } from '../problem.js';
import type { SweepRow } from './sweep.js';

function field(x: string | number | boolean | null | undefined): string {
  if (x === null || x === undefined) return '';
  const s = typeof x === 'number' ? (Number.isFinite(x) ? String(x) : '') : String(x);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

const FIXED = [
  'index', 'id', 'rank', 'meetsConstraints', 'weightedWhPerKm', 'sunTeeth', 'ringTeeth', 'planetTeeth', 'planets', 'k',
  'finalDriveRatio', 'sunTorqueScale', 'ringTorqueScale', 'launchWheelTorqueNm', 'topSpeedKph', 'unfollowedSteps',
] as const;

/** Sweep rows as CSV text (header included, `\n` line ends). */
export function sweepRowsToCsv(rows: readonly SweepRow[]): string {
  const cycleNames = (rows.find((r) => r.cycles.length > 0)?.cycles ?? []).map((c) => c.cycle);
  const header = [
    ...FIXED,
    ...cycleNames.flatMap((n, i) => [`whPerKm[${i}:${n}]`, `unfollowedSteps[${i}:${n}]`]),
    'violations',
    'error',
  ];
  const lines = [header.map(field).join(',')];
  for (const r of rows) {
    const cells: (string | number | boolean | null | undefined)[] = FIXED.map((k) => r[k]);
    for (let i = 0; i < cycleNames.length; i++) {
      const c = r.cycles[i];
      cells.push(c?.whPerKm ?? null, c?.unfollowedSteps ?? null);
    }
    cells.push(r.violations.join('; '), r.error);
    lines.push(cells.map(field).join(','));
  }
  return `${lines.join('\n')}\n`;
}

function fail(message: string, path: string): never {
  throw new ModelError('sweep-invalid', message, path);
}

/** A number as written by {@link sweepRowsToCsv}: empty stands for a non-finite value (NaN) or, when `nullable`, for null. */
function numberField(s: string, path: string, nullable: boolean): number | null {
  if (s === '') return nullable ? null : Number.NaN;
  const v = Number(s);
  if (!Number.isFinite(v) || s.trim() !== s) fail(`"${s}" is not a number`, path);
  return v;
}

/**
 * Reads CSV written by {@link sweepRowsToCsv} back into rows (to merge shard outputs). The CSV
 * does not carry each cycle's battery energy, so `cycles[i].batteryWh` comes back as NaN; every
 * field the CSV holds reads back exactly, and writing the rows again gives the same text.
 * Errors are `sweep-invalid` with the row and column, e.g. `row[3].weightedWhPerKm`.
 */
export function parseSweepCsv(text: string): SweepRow[] {
  let records: string[][];
  try {
    records = parse(text, { relax_column_count: false, skip_empty_lines: true }) as string[][];
  } catch (err) {
    fail(`sweep CSV could not be read: ${(err as Error).message}`, 'csv');
  }
  if (records.length === 0) fail('the sweep CSV is empty', 'header');
  const header = records[0]!;
  const nFixed = FIXED.length;
  for (let j = 0; j < nFixed; j++) {
    if (header[j] !== FIXED[j]) fail(`column ${j + 1} of the header must be "${FIXED[j]}", not "${header[j] ?? ''}"`, 'header');
  }
  const nCycles = (header.length - nFixed - 2) / 2;
  if (!Number.isInteger(nCycles) || nCycles < 0 || header[header.length - 2] !== 'violations' || header[header.length - 1] !== 'error') {
    fail('the header must end with per-cycle column pairs, then "violations" and "error"', 'header');
  }
  const cycleNames: string[] = [];
  for (let i = 0; i < nCycles; i++) {
    const a = /^whPerKm\[(\d+):(.*)\]$/s.exec(header[nFixed + 2 * i]!);
    const b = /^unfollowedSteps\[(\d+):(.*)\]$/s.exec(header[nFixed + 2 * i + 1]!);
    if (!a || !b || Number(a[1]) !== i || Number(b[1]) !== i || a[2] !== b[2]) {
      fail(`columns ${nFixed + 2 * i + 1} and ${nFixed + 2 * i + 2} must be whPerKm[${i}:name] and unfollowedSteps[${i}:name]`, 'header');
    }
    cycleNames.push(a[2]!);
  }
  const rows: SweepRow[] = [];
  for (let r = 1; r < records.length; r++) {
    const f = records[r]!;
    const p = (col: string): string => `row[${r}].${col}`;
    const at = (col: (typeof FIXED)[number]): string => f[FIXED.indexOf(col)]!;
    const num = (col: (typeof FIXED)[number]): number => numberField(at(col), p(col), false)!;
    const index = num('index');
    if (!Number.isInteger(index) || index < 0) fail(`index must be a whole number >= 0, not "${at('index')}"`, p('index'));
    const meets = at('meetsConstraints');
    if (meets !== 'true' && meets !== 'false') fail(`meetsConstraints must be true or false, not "${meets}"`, p('meetsConstraints'));
    const row: SweepRow = {
      index,
      id: at('id'),
      sunTeeth: num('sunTeeth'),
      ringTeeth: num('ringTeeth'),
      planetTeeth: num('planetTeeth'),
      planets: num('planets'),
      k: num('k'),
      finalDriveRatio: num('finalDriveRatio'),
      sunTorqueScale: num('sunTorqueScale'),
      ringTorqueScale: num('ringTorqueScale'),
      launchWheelTorqueNm: num('launchWheelTorqueNm'),
      topSpeedKph: num('topSpeedKph'),
      cycles: [],
      weightedWhPerKm: numberField(at('weightedWhPerKm'), p('weightedWhPerKm'), true),
      unfollowedSteps: num('unfollowedSteps'),
      meetsConstraints: meets === 'true',
      violations: f[header.length - 2] === '' ? [] : f[header.length - 2]!.split('; '),
      rank: numberField(at('rank'), p('rank'), true),
    };
    for (let i = 0; i < nCycles; i++) {
      const wh = f[nFixed + 2 * i]!;
      const steps = f[nFixed + 2 * i + 1]!;
      // A row without cycle figures (a design that could not be built) has both fields empty.
      if (wh === '' && steps === '') break;
      row.cycles.push({
        cycle: cycleNames[i]!,
        batteryWh: Number.NaN,
        whPerKm: numberField(wh, p(`whPerKm[${i}]`), true),
        unfollowedSteps: numberField(steps, p(`unfollowedSteps[${i}]`), false)!,
      });
    }
    const error = f[header.length - 1]!;
    if (error !== '') row.error = error;
    rows.push(row);
  }
  return rows;
}
