/**
 * Design-sweep specification: a base drivetrain, a vehicle, one or more cycles, and the values
 * to try for sun and ring teeth, planet count, final-drive ratio and each machine's torque scale
 * (src/machine/scale.ts). Expansion keeps only tooth combinations that pass the planetary
 * geometry rules (src/gearset/geometry.ts) and gives every design a stable id and index.
 */
import { z } from 'zod';
import { ModelError, parseOrThrow } from '../problem.js';
import { checkGeometry } from '../gearset/geometry.js';
import { drivetrainSchema } from '../solver/drivetrain.js';
import { MODES } from '../solver/types.js';
import { cycleInputSchema, vehicleSchema } from './schema.js';

/** Largest number of designs one sweep may expand to. */
export const MAX_SWEEP_DESIGNS = 20_000;
/** Largest number of values one sweep axis may hold. */
export const MAX_AXIS_VALUES = 500;
/** Largest number of sun × ring × planet combinations checked against the geometry rules. */
export const MAX_TOOTH_COMBINATIONS = 200_000;
/** Largest number of cycles in one sweep. */
export const MAX_SWEEP_CYCLES = 8;

const range = z
  .object({
    from: z.number().describe('First value'),
    to: z.number().describe('Last value (included when reached by whole steps)'),
    step: z.number().positive().describe('Step between values'),
  })
  .strict();

const intAxis = z
  .union([z.array(z.number().int().min(1).max(10_000)).min(1).max(MAX_AXIS_VALUES), range])
  .describe('Whole numbers to try: a list, or {from, to, step}');
const posAxis = z
  .union([z.array(z.number().positive().max(1_000)).min(1).max(MAX_AXIS_VALUES), range])
  .describe('Positive numbers to try: a list, or {from, to, step}');

export const sweepSpecSchema = z
  .object({
    drivetrain: drivetrainSchema.describe('Base drivetrain document; every design is a variant of it'),
    vehicle: vehicleSchema,
    cycles: z
      .array(
        z
          .object({
            cycle: cycleInputSchema,
            weight: z.number().positive().default(1).describe('Weight of this cycle in the ranking mean'),
          })
          .strict(),
      )
      .min(1)
      .max(MAX_SWEEP_CYCLES)
      .describe('Cycles every design runs; designs rank by the weighted mean Wh/km'),
    sunTeeth: intAxis.optional().describe('Sun teeth Zs (default: the base drivetrain’s)'),
    ringTeeth: intAxis.optional().describe('Ring teeth Zr (default: the base drivetrain’s)'),
    planets: intAxis.optional().describe('Planet counts N (default: the base drivetrain’s)'),
    finalDriveRatio: posAxis.optional().describe('Final-drive ratios (default: the base drivetrain’s)'),
    sunTorqueScale: posAxis.optional().describe('Torque scale of the sun machine (default [1])'),
    ringTorqueScale: posAxis.optional().describe('Torque scale of the ring machine (default [1])'),
    modes: z.array(z.enum(MODES)).min(1).optional().describe('Restrict every design to these modes'),
    constraints: z
      .object({
        minLaunchWheelTorqueNm: z.number().min(0).optional().describe('Least wheel torque at standstill, N·m'),
        minTopSpeedKph: z.number().min(0).optional().describe('Least top speed on a flat road, km/h'),
        maxUnfollowedSteps: z.number().int().min(0).default(0).describe('Most cycle steps (all cycles) the design may fail to follow'),
      })
      .strict()
      .default({ maxUnfollowedSteps: 0 }),
  })
  .strict();

export type SweepSpecInput = z.input<typeof sweepSpecSchema>;
export type SweepSpec = z.output<typeof sweepSpecSchema>;

export interface SweepDesign {
  /** Position in the unsharded expansion (0-based); fixes output order. */
  index: number;
  /** Stable id built from the design's values. */
  id: string;
  sunTeeth: number;
  ringTeeth: number;
  planetTeeth: number;
  planets: number;
  finalDriveRatio: number;
  sunTorqueScale: number;
  ringTorqueScale: number;
}

export interface RejectedGearset {
  sunTeeth: number;
  ringTeeth: number;
  planets: number;
  reason: string;
}

/** Validates a sweep specification (defaults applied); errors are `sweep-invalid` with the field path. */
export function parseSweepSpec(input: unknown): SweepSpec {
  return parseOrThrow(sweepSpecSchema, input, 'sweep-invalid', 'sweep');
}

type Axis = number[] | { from: number; to: number; step: number } | undefined;

/** Axis values ascending without repeats (range values rounded to 1e-9 to avoid drift). */
function axisValues(axis: Axis, fallback: number, field: string): number[] {
  if (axis === undefined) return [fallback];
  let values: number[];
  if (Array.isArray(axis)) values = axis;
  else {
    if (axis.to < axis.from) throw new ModelError('sweep-invalid', `${field}: "to" must not be below "from"`, `sweep.${field}.to`);
    const count = Math.floor((axis.to - axis.from) / axis.step + 1e-9) + 1;
    if (count > MAX_AXIS_VALUES) throw new ModelError('too-large', `${field} range has ${count} values; at most ${MAX_AXIS_VALUES}`, `sweep.${field}`);
    values = Array.from({ length: count }, (_, i) => Math.round((axis.from + i * axis.step) * 1e9) / 1e9);
  }
  return [...new Set(values)].sort((a, b) => a - b);
}

function intValues(axis: Axis, fallback: number, field: string): number[] {
  const v = axisValues(axis, fallback, field);
  v.forEach((x, i) => {
    if (!Number.isInteger(x) || x < 1 || x > 10_000) {
      throw new ModelError('sweep-invalid', `${field} values must be whole numbers from 1 to 10 000 (got ${x})`, `sweep.${field}[${i}]`);
    }
  });
  return v;
}

function posValues(axis: Axis, fallback: number, field: string): number[] {
  const v = axisValues(axis, fallback, field);
  v.forEach((x, i) => {
    if (!(x > 0) || x > 1_000) throw new ModelError('sweep-invalid', `${field} values must be positive and at most 1 000 (got ${x})`, `sweep.${field}[${i}]`);
  });
  return v;
}

/** Stable id of a design from its values. */
export function designId(d: Omit<SweepDesign, 'index' | 'id' | 'planetTeeth'>): string {
  return `zs${d.sunTeeth}-zr${d.ringTeeth}-n${d.planets}-fd${d.finalDriveRatio}-ts${d.sunTorqueScale}-tr${d.ringTorqueScale}`;
}

function expand(spec: SweepSpec): { designs: SweepDesign[]; rejected: RejectedGearset[] } {
  const g = spec.drivetrain.gearset;
  const zs = intValues(spec.sunTeeth, g.sunTeeth, 'sunTeeth');
  const zr = intValues(spec.ringTeeth, g.ringTeeth, 'ringTeeth');
  const np = intValues(spec.planets, g.planets, 'planets');
  const fd = posValues(spec.finalDriveRatio, spec.drivetrain.finalDrive.ratio, 'finalDriveRatio');
  const ss = posValues(spec.sunTorqueScale, 1, 'sunTorqueScale');
  const rs = posValues(spec.ringTorqueScale, 1, 'ringTorqueScale');
  const combinations = zs.length * zr.length * np.length;
  if (combinations > MAX_TOOTH_COMBINATIONS) {
    throw new ModelError('too-large', `the sweep tries ${combinations} tooth combinations; at most ${MAX_TOOTH_COMBINATIONS} are allowed`, 'sweep');
  }
  const rejected: RejectedGearset[] = [];
  const gearsets: Array<{ sunTeeth: number; ringTeeth: number; planets: number; planetTeeth: number }> = [];
  for (const s of zs) {
    for (const r of zr) {
      for (const n of np) {
        try {
          const geo = checkGeometry(s, r, n);
          gearsets.push({ sunTeeth: s, ringTeeth: r, planets: n, planetTeeth: geo.planetTeeth });
        } catch (err) {
          if (!(err instanceof ModelError)) throw err;
          rejected.push({ sunTeeth: s, ringTeeth: r, planets: n, reason: err.message });
        }
      }
    }
  }
  const total = gearsets.length * fd.length * ss.length * rs.length;
  if (total > MAX_SWEEP_DESIGNS) {
    throw new ModelError('too-large', `the sweep expands to ${total} designs; at most ${MAX_SWEEP_DESIGNS} are allowed`, 'sweep');
  }
  const designs: SweepDesign[] = [];
  for (const gs of gearsets) {
    for (const f of fd) {
      for (const a of ss) {
        for (const b of rs) {
          const d = { ...gs, finalDriveRatio: f, sunTorqueScale: a, ringTorqueScale: b };
          designs.push({ index: designs.length, id: designId(d), ...d });
        }
      }
    }
  }
  return { designs, rejected };
}

/**
 * Every design of a sweep with a valid gear set, in a fixed order (sun teeth, ring teeth, planets,
 * final drive, sun scale, ring scale; each ascending). Throws `sweep-invalid` when no tooth
 * combination is valid and `too-large` beyond {@link MAX_SWEEP_DESIGNS}.
 */
export function expandSweep(spec: SweepSpec): SweepDesign[] {
  const { designs, rejected } = expand(spec);
  if (designs.length === 0) {
    const why = rejected[0] ? ` (e.g. Zs ${rejected[0].sunTeeth}, Zr ${rejected[0].ringTeeth}, N ${rejected[0].planets}: ${rejected[0].reason})` : '';
    throw new ModelError('sweep-invalid', `no tooth combination of the sweep passes the gear-set geometry rules${why}`, 'sweep.sunTeeth');
  }
  return designs;
}

/** The tooth combinations the geometry rules turned away, with the reason. */
export function rejectedGearsets(spec: SweepSpec): RejectedGearset[] {
  return expand(spec).rejected;
}

/**
 * The designs of shard i of n (0 <= i < n): those whose index mod n equals i. Deterministic;
 * the n shards together hold every design exactly once.
 */
export function shardDesigns(designs: readonly SweepDesign[], i: number, n: number): SweepDesign[] {
  if (!Number.isInteger(n) || n < 1) throw new ModelError('invalid-request', `shard count must be a whole number >= 1 (got ${n})`, 'shard');
  if (!Number.isInteger(i) || i < 0 || i >= n) throw new ModelError('invalid-request', `shard index must be a whole number in 0..${n - 1} (got ${i})`, 'shard');
  return designs.filter((d) => d.index % n === i);
}
