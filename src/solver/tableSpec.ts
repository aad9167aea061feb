/**
 * Lookup-table requests (DESIGN.md §6): a grid of wheel speeds (rpm) × wheel torques (N·m),
 * optional mode restriction, strict braking, a mode-switch margin (W) and an output format.
 * The zod schema checks shape; {@link resolveTableSpec} checks what needs the whole request
 * (ascending axes, the cell cap) and throws `ModelError('table-invalid', …, path)`.
 */
import { z } from 'zod';
import { ModelError, parseOrThrow } from '../problem.js';
import { MODES, type Mode } from './types.js';

/** Longest axis of a table. */
export const MAX_TABLE_AXIS = 1001;
/** Default cap on the cells of one table (1001 × 1001); callers may set a lower cap. */
export const MAX_TABLE_CELLS = MAX_TABLE_AXIS * MAX_TABLE_AXIS;

export const TABLE_FORMATS = ['json', 'csv', 'c'] as const;
export type TableFormat = (typeof TABLE_FORMATS)[number];

const axisRange = z
  .object({
    from: z.number().describe('First value of the axis'),
    to: z.number().describe('Last value of the axis (greater than from)'),
    steps: z.number().int().min(2).max(MAX_TABLE_AXIS).describe('Number of evenly spaced values, ends included'),
  })
  .strict();

const axisList = z.array(z.number()).min(2).max(MAX_TABLE_AXIS).describe('Explicit values, strictly ascending');

const axis = z.union([axisRange, axisList]);

export const tableSpecSchema = z
  .object({
    speedRpm: axis.describe('Wheel speed axis, rpm: { from, to, steps } or an ascending list'),
    torqueNm: axis.describe('Wheel torque axis, N·m (negative = braking): { from, to, steps } or an ascending list'),
    modes: z.array(z.enum(MODES)).min(1).optional().describe('Restrict the optimum to these modes'),
    strict: z.boolean().optional().describe('Braking beyond what the machines and battery absorb is infeasible instead of friction-braked'),
    modeSwitchMarginW: z
      .number()
      .min(0)
      .max(1e7)
      .default(0)
      .describe('A cell may keep its neighbours\' mode when that costs at most this much more battery power, W'),
    format: z.enum(TABLE_FORMATS).default('json').describe('Output format'),
  })
  .strict();

export type TableSpecInput = z.input<typeof tableSpecSchema>;
export type TableSpec = z.output<typeof tableSpecSchema>;
export type TableAxisSpec = z.output<typeof axis>;

/** A validated request with its axes expanded. */
export interface ResolvedTableSpec {
  /** Wheel speeds, rpm, strictly ascending. */
  speedRpm: Float64Array;
  /** Wheel torques, N·m, strictly ascending. */
  torqueNm: Float64Array;
  modes?: Mode[];
  strict: boolean;
  modeSwitchMarginW: number;
  format: TableFormat;
  /** The request as given (after defaults), kept for the generation record. */
  spec: TableSpec;
}

function fail(message: string, path: string): never {
  throw new ModelError('table-invalid', message, path);
}

/** Evenly spaced values from `from` to `to` inclusive; the last value is exactly `to`. */
export function linspace(from: number, to: number, steps: number): Float64Array {
  const out = new Float64Array(steps);
  const span = to - from;
  for (let k = 0; k < steps; k++) out[k] = from + (span * k) / (steps - 1);
  out[steps - 1] = to;
  return out;
}

function expandAxis(a: TableAxisSpec, field: string): Float64Array {
  if (Array.isArray(a)) {
    if (a.length < 2 || a.length > MAX_TABLE_AXIS) fail(`${field} needs 2 to ${MAX_TABLE_AXIS} values; it has ${a.length}`, field);
    for (let k = 0; k < a.length; k++) {
      const v = a[k]!;
      if (!Number.isFinite(v)) fail(`${field}[${k}] must be a finite number`, `${field}[${k}]`);
      if (k > 0 && !(v > a[k - 1]!)) fail(`${field} must be strictly ascending (at index ${k})`, `${field}[${k}]`);
    }
    return Float64Array.from(a);
  }
  if (!Number.isFinite(a.from)) fail(`${field}.from must be a finite number`, `${field}.from`);
  if (!Number.isFinite(a.to)) fail(`${field}.to must be a finite number`, `${field}.to`);
  if (!(a.to > a.from)) fail(`${field}.to (${a.to}) must be greater than ${field}.from (${a.from})`, `${field}.to`);
  if (!Number.isInteger(a.steps) || a.steps < 2 || a.steps > MAX_TABLE_AXIS) {
    fail(`${field}.steps must be a whole number from 2 to ${MAX_TABLE_AXIS}`, `${field}.steps`);
  }
  const values = linspace(a.from, a.to, a.steps);
  for (let k = 1; k < values.length; k++) {
    if (!(values[k]! > values[k - 1]!)) fail(`${field} steps are too fine to be distinct numbers`, `${field}.steps`);
  }
  return values;
}

/**
 * Parses (zod, defaults applied) and resolves a table request. Shape errors come from zod;
 * ordering and size errors are `ModelError('table-invalid')` with the field path.
 */
export function resolveTableSpec(input: TableSpecInput | TableSpec, maxCells: number = MAX_TABLE_CELLS): ResolvedTableSpec {
  const spec = parseOrThrow(tableSpecSchema, input, 'table-invalid');
  const speedRpm = expandAxis(spec.speedRpm, 'speedRpm');
  const torqueNm = expandAxis(spec.torqueNm, 'torqueNm');
  const cells = speedRpm.length * torqueNm.length;
  if (cells > maxCells) {
    fail(
      `the table would have ${speedRpm.length} × ${torqueNm.length} = ${cells} cells; at most ${maxCells} are allowed`,
      'torqueNm',
    );
  }
  const out: ResolvedTableSpec = {
    speedRpm,
    torqueNm,
    strict: spec.strict ?? false,
    modeSwitchMarginW: spec.modeSwitchMarginW,
    format: spec.format,
    spec,
  };
  if (spec.modes) out.modes = [...new Set(spec.modes)];
  return out;
}

/**
 * An axis written as text, for query strings and the command line: `from:to:steps` or a
 * comma-separated list of numbers. Shape only (ordering and size are checked by
 * {@link resolveTableSpec}); an empty entry or a non-number is `invalid-request` at `field`.
 */
export function parseAxisText(text: string, field: string): { from: number; to: number; steps: number } | number[] {
  const num = (s: string): number => (s.trim() === '' ? Number.NaN : Number(s));
  const range = /^\s*([^:]+):([^:]+):([^:]+)$/.exec(text);
  if (range) {
    const [from, to, steps] = [num(range[1]!), num(range[2]!), num(range[3]!)];
    if (!Number.isFinite(from) || !Number.isFinite(to) || !Number.isInteger(steps)) {
      throw new ModelError('invalid-request', `${field} "${text}": expected from:to:steps with numbers and a whole step count`, field);
    }
    return { from, to, steps };
  }
  const list = text.split(',').map(num);
  if (list.some((v) => !Number.isFinite(v))) {
    throw new ModelError('invalid-request', `${field} "${text}": expected from:to:steps or a comma-separated list of numbers (no empty entries)`, field);
  }
  return list;
}
