/**
 * CSV input for `grid` and `points` machine maps (long format, one row per point).
 *
 * A file holds settings lines, a data table and an envelope table:
 *
 *   # maxSpeedRpm=12000
 *   # reverse=true
 *   speedRpm,torqueNm,lossW
 *   0,-200,850
 *   ...
 *   speedRpm,maxTorqueNm,minTorqueNm
 *   0,200,-200
 *   ...
 *
 * - Settings: a line `# name=value`. Grid and points files take `maxSpeedRpm` (required),
 *   `reverse` (true/false, default true) and `description`; points files also take
 *   `speedDegree`, `torqueDegree`, `totalDegree`, `speedSteps`, `torqueSteps`. An unknown
 *   setting name is an error; any other line starting with `#` is a comment.
 * - Tables: each starts with a header row of column names (units in the names; a row holding no
 *   number is a header); the two tables may come in either order; blank lines are ignored.
 *   - grid data: `speedRpm,torqueNm,lossW` or `speedRpm,torqueNm,efficiency`; every
 *     speed–torque combination exactly once; an empty efficiency cell means "no value here" (zero
 *     shaft power, filled on load). The envelope has one row per grid speed.
 *   - points data: `speedRpm,torqueNm` with `electricalW`, `efficiency` or both columns, each
 *     row filling exactly one of them. The envelope rows are the envelope's own speeds.
 * - Errors: ModelError 'map-invalid' with path `csv line N column X` (X a column name where
 *   known, else its 1-based number).
 * The result is a plain document for `gridMapSchema` / `pointsMapSchema` to validate.
 */
import { parse } from 'csv-parse/sync';
import { ModelError } from '../problem.js';

type Kind = 'grid' | 'points';

const DATA_VALUE_COLUMNS: Record<Kind, string[]> = {
  grid: ['lossW', 'efficiency'],
  points: ['electricalW', 'efficiency'],
};
const ENVELOPE_COLUMNS = ['speedRpm', 'maxTorqueNm', 'minTorqueNm'];
const NUMBER_SETTINGS: Record<Kind, string[]> = {
  grid: ['maxSpeedRpm'],
  points: ['maxSpeedRpm', 'speedDegree', 'torqueDegree', 'totalDegree', 'speedSteps', 'torqueSteps'],
};
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const SETTING = /^\s*#\s*([A-Za-z][A-Za-z0-9]*)\s*=(.*)$/;

function fail(message: string, line: number, column?: string): never {
  throw new ModelError('map-invalid', message, column === undefined ? `csv line ${line}` : `csv line ${line} column ${column}`);
}

interface Row {
  line: number;
  cells: string[];
}

interface Table {
  headerLine: number;
  columns: string[];
  rows: Row[];
}

/** Reads `# name=value` settings; returns them with the line each came from. */
function readSettings(text: string, kind: Kind): Map<string, { value: string; line: number }> {
  const known = new Set([...NUMBER_SETTINGS[kind], 'reverse', 'description']);
  const out = new Map<string, { value: string; line: number }>();
  const lines = text.split(/\r\n|\n|\r/);
  for (let i = 0; i < lines.length; i++) {
    const m = SETTING.exec(lines[i]!);
    if (!m) continue;
    const name = m[1]!;
    if (!known.has(name)) fail(`unknown setting "${name}"; a ${kind} CSV takes ${[...known].join(', ')}`, i + 1);
    if (out.has(name)) fail(`setting "${name}" given twice (first on line ${out.get(name)!.line})`, i + 1);
    out.set(name, { value: m[2]!.trim(), line: i + 1 });
  }
  return out;
}

/** Splits the records into tables, each starting at a header row (a row with no number in it). */
function readTables(text: string): Table[] {
  let records: Array<{ record: string[]; info: { lines: number } }>;
  try {
    records = parse(text, {
      info: true,
      bom: true,
      comment: '#',
      comment_no_infix: true,
      skip_empty_lines: true,
      trim: true,
      relax_column_count: true,
    }) as unknown as Array<{ record: string[]; info: { lines: number } }>;
  } catch (e) {
    const err = e as { message?: string; lines?: number; index?: number };
    const line = typeof err.lines === 'number' ? err.lines : 1;
    const col = typeof err.index === 'number' ? String(err.index + 1) : undefined;
    fail(`malformed CSV: ${err.message ?? String(e)}`, line, col);
  }
  const tables: Table[] = [];
  for (const { record, info } of records) {
    if (record.every((c) => c === '')) continue;
    if (!record.some((c) => DECIMAL.test(c))) {
      tables.push({ headerLine: info.lines, columns: record, rows: [] });
      continue;
    }
    const table = tables[tables.length - 1];
    if (!table) fail('data before any header row; start each table with its column names', info.lines);
    table.rows.push({ line: info.lines, cells: record });
  }
  return tables;
}

/** Checks a header row against the allowed columns; returns the index of each column. */
function columnIndex(t: Table, allowed: string[], required: string[]): Map<string, number> {
  const idx = new Map<string, number>();
  t.columns.forEach((name, k) => {
    if (!allowed.includes(name)) fail(`unknown column "${name}"; this table takes ${allowed.join(', ')}`, t.headerLine, String(k + 1));
    if (idx.has(name)) fail(`column "${name}" appears twice`, t.headerLine, name);
    idx.set(name, k);
  });
  for (const name of required) if (!idx.has(name)) fail(`column "${name}" is missing`, t.headerLine);
  for (const row of t.rows) {
    if (row.cells.length !== t.columns.length) {
      fail(`row has ${row.cells.length} cells; the header on line ${t.headerLine} has ${t.columns.length}`, row.line);
    }
  }
  return idx;
}

/** The number in a cell; empty cells give null when `optional`, else an error. */
function cellNumber(row: Row, idx: Map<string, number>, name: string, optional = false): number | null {
  const k = idx.get(name);
  const raw = k === undefined ? '' : row.cells[k]!;
  if (raw === '') {
    if (optional) return null;
    fail(`empty cell; ${name} needs a number`, row.line, name);
  }
  if (!DECIMAL.test(raw)) fail(`"${raw}" is not a number`, row.line, name);
  return Number(raw);
}

function splitTables(tables: Table[], kind: Kind): { data: Table; envelope: Table } {
  let data: Table | undefined;
  let envelope: Table | undefined;
  for (const t of tables) {
    const isEnvelope = t.columns.includes('maxTorqueNm') || t.columns.includes('minTorqueNm');
    if (isEnvelope) {
      if (envelope) fail(`a second envelope table (the first starts on line ${envelope.headerLine})`, t.headerLine);
      envelope = t;
    } else {
      if (data) fail(`a second data table (the first starts on line ${data.headerLine})`, t.headerLine);
      data = t;
    }
  }
  if (!data) fail(`no data table; start it with a header such as speedRpm,torqueNm,${DATA_VALUE_COLUMNS[kind][0]}`, 1);
  if (!envelope) fail(`no envelope table; add one with the header ${ENVELOPE_COLUMNS.join(',')}`, 1);
  if (data.rows.length === 0) fail('the data table has no rows', data.headerLine);
  if (envelope.rows.length === 0) fail('the envelope table has no rows', envelope.headerLine);
  return { data, envelope };
}

function settingsPart(settings: Map<string, { value: string; line: number }>, kind: Kind): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  if (!settings.has('maxSpeedRpm')) fail('setting maxSpeedRpm is missing; add a line such as "# maxSpeedRpm=12000"', 1);
  for (const name of NUMBER_SETTINGS[kind]) {
    const s = settings.get(name);
    if (!s) continue;
    if (!DECIMAL.test(s.value)) fail(`setting ${name}: "${s.value}" is not a number`, s.line);
    out[name] = Number(s.value);
  }
  const rev = settings.get('reverse');
  if (rev) {
    if (rev.value !== 'true' && rev.value !== 'false') fail(`setting reverse: "${rev.value}" must be true or false`, rev.line);
    out.reverse = rev.value === 'true';
  }
  const desc = settings.get('description');
  if (desc) out.description = desc.value;
  return out;
}

interface EnvelopeRows {
  speedRpm: number[];
  maxTorqueNm: number[];
  minTorqueNm: number[];
  lines: number[];
}

function readEnvelope(t: Table): EnvelopeRows {
  const idx = columnIndex(t, ENVELOPE_COLUMNS, ENVELOPE_COLUMNS);
  const env: EnvelopeRows = { speedRpm: [], maxTorqueNm: [], minTorqueNm: [], lines: [] };
  for (const row of t.rows) {
    env.speedRpm.push(cellNumber(row, idx, 'speedRpm')!);
    env.maxTorqueNm.push(cellNumber(row, idx, 'maxTorqueNm')!);
    env.minTorqueNm.push(cellNumber(row, idx, 'minTorqueNm')!);
    env.lines.push(row.line);
  }
  return env;
}

function gridDocument(data: Table, envT: Table, base: Record<string, unknown>): Record<string, unknown> {
  const idx = columnIndex(data, ['speedRpm', 'torqueNm', ...DATA_VALUE_COLUMNS.grid], ['speedRpm', 'torqueNm']);
  const present = DATA_VALUE_COLUMNS.grid.filter((c) => idx.has(c));
  if (present.length !== 1) fail('a grid table needs exactly one of the columns lossW and efficiency', data.headerLine);
  const valueCol = present[0]!;
  const firstLineOfSpeed = new Map<number, number>();
  const cells = new Map<string, { value: number | null; line: number }>();
  const torques = new Set<number>();
  for (const row of data.rows) {
    const s = cellNumber(row, idx, 'speedRpm')!;
    const t = cellNumber(row, idx, 'torqueNm')!;
    const v = cellNumber(row, idx, valueCol, valueCol === 'efficiency');
    const key = `${s},${t}`;
    const prev = cells.get(key);
    if (prev) fail(`speedRpm=${s}, torqueNm=${t} given twice (first on line ${prev.line})`, row.line, 'torqueNm');
    cells.set(key, { value: v, line: row.line });
    if (!firstLineOfSpeed.has(s)) firstLineOfSpeed.set(s, row.line);
    torques.add(t);
  }
  const speedRpm = [...firstLineOfSpeed.keys()].sort((a, b) => a - b);
  const torqueNm = [...torques].sort((a, b) => a - b);
  const table: Array<Array<number | null>> = speedRpm.map((s) =>
    torqueNm.map((t) => {
      const c = cells.get(`${s},${t}`);
      if (!c) {
        fail(
          `no row for speedRpm=${s}, torqueNm=${t}; a grid needs every speed–torque combination (speed ${s} first appears here)`,
          firstLineOfSpeed.get(s)!,
          'torqueNm',
        );
      }
      return c.value;
    }),
  );

  const env = readEnvelope(envT);
  const envAt = new Map<number, number>();
  env.speedRpm.forEach((s, k) => {
    if (envAt.has(s)) fail(`envelope speedRpm=${s} given twice (first on line ${env.lines[envAt.get(s)!]})`, env.lines[k]!, 'speedRpm');
    if (!firstLineOfSpeed.has(s)) fail(`envelope speedRpm=${s} is not a speed of the grid; give one envelope row per grid speed`, env.lines[k]!, 'speedRpm');
    envAt.set(s, k);
  });
  for (const s of speedRpm) {
    if (!envAt.has(s)) fail(`the envelope has no row for grid speed ${s} rpm (first used on this line)`, firstLineOfSpeed.get(s)!, 'speedRpm');
  }
  return {
    kind: 'grid',
    ...base,
    speedRpm,
    torqueNm,
    [valueCol]: table,
    maxTorqueNm: speedRpm.map((s) => env.maxTorqueNm[envAt.get(s)!]!),
    minTorqueNm: speedRpm.map((s) => env.minTorqueNm[envAt.get(s)!]!),
  };
}

function pointsDocument(data: Table, envT: Table, base: Record<string, unknown>): Record<string, unknown> {
  const allowed = ['speedRpm', 'torqueNm', ...DATA_VALUE_COLUMNS.points];
  const idx = columnIndex(data, allowed, ['speedRpm', 'torqueNm']);
  if (!idx.has('electricalW') && !idx.has('efficiency')) fail('a points table needs an electricalW or efficiency column (or both)', data.headerLine);
  const points = data.rows.map((row) => {
    const speedRpm = cellNumber(row, idx, 'speedRpm')!;
    const torqueNm = cellNumber(row, idx, 'torqueNm')!;
    const electricalW = cellNumber(row, idx, 'electricalW', true);
    const efficiency = cellNumber(row, idx, 'efficiency', true);
    if ((electricalW === null) === (efficiency === null)) fail('fill exactly one of electricalW and efficiency', row.line, 'electricalW');
    return electricalW !== null ? { speedRpm, torqueNm, electricalW } : { speedRpm, torqueNm, efficiency: efficiency! };
  });
  const env = readEnvelope(envT);
  const { speedDegree, torqueDegree, totalDegree, speedSteps, torqueSteps, ...rest } = base;
  const doc: Record<string, unknown> = {
    kind: 'points',
    ...rest,
    points,
    envelope: { speedRpm: env.speedRpm, maxTorqueNm: env.maxTorqueNm, minTorqueNm: env.minTorqueNm },
  };
  if (speedDegree !== undefined || torqueDegree !== undefined || totalDegree !== undefined) {
    doc.fit = {
      speedDegree: speedDegree ?? 3,
      torqueDegree: torqueDegree ?? 3,
      ...(totalDegree !== undefined ? { totalDegree } : {}),
    };
  }
  if (speedSteps !== undefined || torqueSteps !== undefined) {
    doc.grid = { speedSteps: speedSteps ?? 41, torqueSteps: torqueSteps ?? 61 };
  }
  return doc;
}

/**
 * Parses a long-format machine CSV (format in the file comment) into a `grid` or `points`
 * document, to be validated by `gridMapSchema` / `pointsMapSchema`.
 */
export function parseMachineCsv(text: string, kind: Kind): unknown {
  const settings = readSettings(text, kind);
  const { data, envelope } = splitTables(readTables(text), kind);
  const base = settingsPart(settings, kind);
  return kind === 'grid' ? gridDocument(data, envelope, base) : pointsDocument(data, envelope, base);
}
