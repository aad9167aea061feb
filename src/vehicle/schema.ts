/**
 * Vehicle and drive-cycle documents (DESIGN.md §7), validated with zod, plus the checks that need
 * the whole cycle (lengths, time order, accelerations) with the offending field's path.
 */
import { parse } from 'csv-parse/sync';
import { z } from 'zod';
import { ModelError, parseOrThrow } from '../problem.js';
import { SEA_LEVEL_AIR_DENSITY } from '../units.js';
import { BUILTIN_CYCLE_IDS, getBuiltinCycle } from './cycles.js';

/** Largest number of samples accepted in one cycle. */
export const MAX_CYCLE_SAMPLES = 100_000;
/** Largest acceleration magnitude accepted between two samples, m/s² (about 1 g; beyond any road vehicle's traction). */
export const MAX_CYCLE_ACCEL_MS2 = 10;
/** Largest time stamp magnitude accepted, s (about 31 years; keeps every step duration finite). */
export const MAX_CYCLE_TIME_S = 1e9;
/** Largest grade magnitude accepted, % (45°). */
export const MAX_GRADE_PCT = 100;
/** Largest CSV cycle text accepted, characters. */
export const MAX_CYCLE_CSV_CHARS = 8_000_000;

export const regenSchema = z
  .object({
    maxFraction: z.number().min(0).max(1).default(1).describe('Largest share of a braking request the machines may take, 0..1; friction brakes take the rest'),
    minSpeedKph: z.number().min(0).max(400).default(0).describe('Below this vehicle speed, km/h, friction brakes take all braking'),
  })
  .strict();

export const vehicleSchema = z
  .object({
    massKg: z.number().positive().max(100_000).describe('Test mass of the vehicle, kg'),
    rotatingMassFactor: z.number().min(0).max(2).default(0).describe('δ: rotating inertia as a share of the mass (effective mass m·(1+δ))'),
    rollingResistance: z.number().min(0).max(0.1).describe('Rolling resistance coefficient Crr (dimensionless)'),
    dragAreaM2: z.number().min(0).max(50).describe('Drag coefficient times frontal area, CdA, m²'),
    airDensity: z.number().positive().max(2).default(SEA_LEVEL_AIR_DENSITY).describe('Air density ρ, kg/m³ (default ISO 2533 sea level, 15 °C)'),
    wheelRadiusM: z.number().positive().max(3).optional().describe('Dynamic wheel radius, m (default: the drivetrain’s)'),
    auxiliaryW: z.number().min(0).max(1_000_000).default(0).describe('Vehicle auxiliary load on the battery, W (added to the drivetrain’s own)'),
    regen: regenSchema.default({ maxFraction: 1, minSpeedKph: 0 }).describe('Regenerative braking policy'),
  })
  .strict();

export type VehicleDoc = z.input<typeof vehicleSchema>;
export type Vehicle = z.output<typeof vehicleSchema>;

const sampleArray = z.array(z.number()).min(2).max(MAX_CYCLE_SAMPLES);

export const cycleTraceSchema = z
  .object({
    name: z.string().max(200).optional().describe('Name of the cycle (free text)'),
    timeS: sampleArray.describe('Sample times, s, strictly increasing'),
    speedKph: sampleArray.describe('Vehicle speed at each sample, km/h, >= 0'),
    gradePct: sampleArray.optional().describe('Road grade at each sample, % (rise/run·100; positive uphill)'),
  })
  .strict();

export const builtinCycleSchema = z
  .object({ builtin: z.enum(BUILTIN_CYCLE_IDS).describe('A built-in cycle') })
  .strict();

export const cycleInputSchema = z.union([cycleTraceSchema, builtinCycleSchema]);
export type CycleInput = z.infer<typeof cycleInputSchema>;

/** A validated drive cycle: samples in s, km/h and % (grade null when flat). */
export interface Cycle {
  readonly name: string;
  readonly timeS: Float64Array;
  readonly speedKph: Float64Array;
  readonly gradePct: Float64Array | null;
}

function cycleFail(message: string, path: string): never {
  throw new ModelError('cycle-invalid', message, path);
}

/**
 * Checks a speed trace and returns it as a {@link Cycle}. Rules: equal lengths, at least 2 and at
 * most {@link MAX_CYCLE_SAMPLES} samples, finite numbers, strictly increasing time, speeds >= 0,
 * |Δv/Δt| <= {@link MAX_CYCLE_ACCEL_MS2} m/s², |grade| <= {@link MAX_GRADE_PCT} %.
 * Errors carry the path of the first offending sample under `base` (e.g. `cycle.timeS[12]`).
 */
export function validateCycleTrace(
  trace: { name?: string; timeS: ArrayLike<number>; speedKph: ArrayLike<number>; gradePct?: ArrayLike<number> | null },
  base = 'cycle',
): Cycle {
  const p = (field: string, i?: number): string => (i === undefined ? `${base}.${field}` : `${base}.${field}[${i}]`);
  const n = trace.timeS?.length ?? 0;
  if (!trace.timeS || !trace.speedKph) cycleFail('a cycle needs timeS and speedKph', p(trace.timeS ? 'speedKph' : 'timeS'));
  if (n < 2) cycleFail(`a cycle needs at least 2 samples; got ${n}`, p('timeS'));
  if (n > MAX_CYCLE_SAMPLES) throw new ModelError('too-large', `a cycle has at most ${MAX_CYCLE_SAMPLES} samples; got ${n}`, p('timeS'));
  if (trace.speedKph.length !== n) cycleFail(`speedKph has ${trace.speedKph.length} samples but timeS has ${n}`, p('speedKph'));
  const grade = trace.gradePct ?? null;
  if (grade && grade.length !== n) cycleFail(`gradePct has ${grade.length} samples but timeS has ${n}`, p('gradePct'));
  const t = new Float64Array(n);
  const v = new Float64Array(n);
  const g = grade ? new Float64Array(n) : null;
  for (let i = 0; i < n; i++) {
    const ti = trace.timeS[i]!;
    const vi = trace.speedKph[i]!;
    if (typeof ti !== 'number' || !Number.isFinite(ti) || Math.abs(ti) > MAX_CYCLE_TIME_S) {
      cycleFail(`timeS[${i}] must be a finite number of seconds within ±${MAX_CYCLE_TIME_S}`, p('timeS', i));
    }
    if (typeof vi !== 'number' || !Number.isFinite(vi)) cycleFail(`speedKph[${i}] must be a finite number`, p('speedKph', i));
    if (vi < 0) cycleFail(`speedKph[${i}] = ${vi}; speeds must be >= 0`, p('speedKph', i));
    if (i > 0 && !(ti > t[i - 1]!)) cycleFail(`timeS must be strictly increasing: timeS[${i}] = ${ti} follows ${t[i - 1]}`, p('timeS', i));
    t[i] = ti;
    v[i] = vi;
    if (i > 0) {
      const a = (vi - v[i - 1]!) / 3.6 / (ti - t[i - 1]!);
      if (Math.abs(a) > MAX_CYCLE_ACCEL_MS2) {
        cycleFail(
          `acceleration ${a.toFixed(2)} m/s² between samples ${i - 1} and ${i} exceeds ±${MAX_CYCLE_ACCEL_MS2} m/s²`,
          p('speedKph', i),
        );
      }
    }
    if (g) {
      const gi = grade![i]!;
      if (typeof gi !== 'number' || !Number.isFinite(gi)) cycleFail(`gradePct[${i}] must be a finite number`, p('gradePct', i));
      if (Math.abs(gi) > MAX_GRADE_PCT) cycleFail(`gradePct[${i}] = ${gi}; grades lie within ±${MAX_GRADE_PCT} %`, p('gradePct', i));
      g[i] = gi;
    }
  }
  return Object.freeze({ name: trace.name ?? 'custom', timeS: t, speedKph: v, gradePct: g });
}

/** Resolves a cycle document (built-in id or explicit trace) to a validated {@link Cycle}. */
export function resolveCycle(input: CycleInput, base = 'cycle'): Cycle {
  if ('builtin' in input) return getBuiltinCycle(input.builtin);
  return validateCycleTrace(input, base);
}

const CSV_COLUMNS = ['timeS', 'speedKph', 'gradePct'] as const;

/**
 * Parses a cycle from CSV text with a header row naming the columns `timeS,speedKph[,gradePct]`
 * (any order; `#` starts a comment line). Values must be plain decimal numbers. Errors carry the
 * sample path (`cycle.speedKph[4]`) and the CSV line in the message.
 */
export function parseCycleCsv(text: string, name = 'csv', base = 'cycle'): Cycle {
  if (text.length > MAX_CYCLE_CSV_CHARS) throw new ModelError('too-large', `cycle CSV is larger than ${MAX_CYCLE_CSV_CHARS} characters`, base);
  let records: string[][];
  try {
    records = parse(text, { comment: '#', skip_empty_lines: true, trim: true, relax_column_count: false }) as string[][];
  } catch (err) {
    cycleFail(`cycle CSV could not be read: ${(err as Error).message}`, base);
  }
  if (records.length === 0) cycleFail('cycle CSV is empty; expected a header row timeS,speedKph[,gradePct]', base);
  const header = records[0]!;
  const index: Record<string, number> = {};
  header.forEach((h, j) => {
    if (!(CSV_COLUMNS as readonly string[]).includes(h)) cycleFail(`unknown CSV column "${h}"; expected timeS, speedKph and optionally gradePct`, `${base}.${h}`);
    if (h in index) cycleFail(`CSV column "${h}" appears twice`, `${base}.${h}`);
    index[h] = j;
  });
  for (const required of ['timeS', 'speedKph']) {
    if (!(required in index)) cycleFail(`CSV header lacks the column "${required}"`, `${base}.${required}`);
  }
  const rows = records.length - 1;
  if (rows > MAX_CYCLE_SAMPLES) throw new ModelError('too-large', `a cycle has at most ${MAX_CYCLE_SAMPLES} samples; the CSV has ${rows}`, `${base}.timeS`);
  const hasGrade = 'gradePct' in index;
  const timeS = new Array<number>(rows);
  const speedKph = new Array<number>(rows);
  const gradePct = hasGrade ? new Array<number>(rows) : undefined;
  const num = (cell: string | undefined, field: string, i: number): number => {
    const x = cell !== undefined && /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(cell) ? Number(cell) : Number.NaN;
    if (!Number.isFinite(x)) cycleFail(`CSV data row ${i + 1}: ${field} "${cell ?? ''}" is not a number`, `${base}.${field}[${i}]`);
    return x;
  };
  for (let i = 0; i < rows; i++) {
    const r = records[i + 1]!;
    timeS[i] = num(r[index.timeS!], 'timeS', i);
    speedKph[i] = num(r[index.speedKph!], 'speedKph', i);
    if (gradePct) gradePct[i] = num(r[index.gradePct!], 'gradePct', i);
  }
  return validateCycleTrace({ name, timeS, speedKph, gradePct }, base);
}

/** Validates a vehicle document (defaults applied); errors are `vehicle-invalid` with the field path. */
export function parseVehicle(input: unknown, base = 'vehicle'): Vehicle {
  return parseOrThrow(vehicleSchema, input, 'vehicle-invalid', base);
}

/** Validates a cycle document (built-in id or trace) and resolves it; errors are `cycle-invalid` with the path. */
export function parseCycleInput(input: unknown, base = 'cycle'): Cycle {
  const isBuiltin = typeof input === 'object' && input !== null && 'builtin' in input;
  // Only too many samples is "too large"; a long name or a big value is simply invalid.
  const doc = isBuiltin
    ? parseOrThrow(builtinCycleSchema, input, 'cycle-invalid', base)
    : parseOrThrow(cycleTraceSchema, input, 'cycle-invalid', base, 'too-large');
  return resolveCycle(doc, base);
}
