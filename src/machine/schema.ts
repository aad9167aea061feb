/**
 * Machine map documents (DESIGN.md §3), validated with zod. These schemas are the single source
 * of validation, TypeScript types and the OpenAPI description for map uploads.
 * Shape rules that need the whole document (axis order, grid size, envelope span) are checked
 * when the document is converted to the canonical map, with the field path in the error.
 */
import { z } from 'zod';

/** Largest number of cells in a grid document (400 × 400). */
export const MAX_GRID_AXIS = 400;
/** Largest number of measured points in a `points` document. */
export const MAX_POINTS = 20_000;

export const machineName = z
  .string()
  .regex(/^[a-z0-9][a-z0-9-]{0,63}$/, 'names are 1–64 characters of a–z, 0–9 and "-", starting with a letter or digit')
  .describe('Machine or drivetrain name: [a-z0-9][a-z0-9-]{0,63}');

const description = z.string().max(4000).optional().describe('Free text: what this document is and where its data came from');
const reverse = z.boolean().default(true).describe('Whether the machine may turn backwards (mirror of the forward map)');
const speedAxis = z.array(z.number()).min(2).max(MAX_GRID_AXIS);
const torqueAxis = z.array(z.number()).min(2).max(MAX_GRID_AXIS);
const gridSize = z
  .object({
    speedSteps: z.number().int().min(2).max(MAX_GRID_AXIS).default(41).describe('Nodes on the speed axis'),
    torqueSteps: z.number().int().min(2).max(MAX_GRID_AXIS).default(61).describe('Nodes on the torque axis'),
  })
  .strict()
  .default({ speedSteps: 41, torqueSteps: 61 });

export const gridMapSchema = z
  .object({
    kind: z.literal('grid'),
    description,
    speedRpm: speedAxis.describe('Speed axis, rpm, strictly ascending from 0 to at least maxSpeedRpm'),
    torqueNm: torqueAxis.describe('Torque axis, N·m, strictly ascending, spanning the envelope'),
    lossW: z
      .array(z.array(z.number().min(0)).max(MAX_GRID_AXIS))
      .max(MAX_GRID_AXIS)
      .optional()
      .describe('Loss (machine + inverter), W, indexed [speed][torque]'),
    efficiency: z
      .array(z.array(z.number().gt(0).lte(1).nullable()).max(MAX_GRID_AXIS))
      .max(MAX_GRID_AXIS)
      .optional()
      .describe('Efficiency 0..1, indexed [speed][torque]; null (or any value) where shaft power is zero, filled from neighbours'),
    maxTorqueNm: speedAxis.describe('Largest torque at each speed of the axis, N·m (>= 0)'),
    minTorqueNm: speedAxis.describe('Smallest (braking) torque at each speed of the axis, N·m (<= 0)'),
    maxSpeedRpm: z.number().positive().describe('Speed limit, rpm'),
    reverse,
  })
  .strict()
  .refine((d) => (d.lossW === undefined) !== (d.efficiency === undefined), {
    message: 'give exactly one of lossW and efficiency',
    path: ['lossW'],
  });

export const envelopeSchema = z
  .object({
    speedRpm: speedAxis.describe('Speeds of the envelope, rpm, ascending from 0 to at least maxSpeedRpm'),
    maxTorqueNm: speedAxis.describe('Largest torque at each envelope speed, N·m'),
    minTorqueNm: speedAxis.describe('Smallest torque at each envelope speed, N·m'),
  })
  .strict();

export const measuredPointSchema = z
  .object({
    speedRpm: z.number().min(0).describe('Shaft speed, rpm'),
    torqueNm: z.number().describe('Shaft torque, N·m'),
    electricalW: z.number().optional().describe('Measured DC electrical power, W'),
    efficiency: z.number().gt(0).lte(1).optional().describe('Measured efficiency 0..1 (when electricalW is not given)'),
  })
  .strict()
  .refine((p) => (p.electricalW === undefined) !== (p.efficiency === undefined), {
    message: 'give exactly one of electricalW and efficiency',
    path: ['electricalW'],
  });

export const pointsMapSchema = z
  .object({
    kind: z.literal('points'),
    description,
    points: z.array(measuredPointSchema).min(1).max(MAX_POINTS).describe('Measured test points'),
    envelope: envelopeSchema,
    maxSpeedRpm: z.number().positive().describe('Speed limit, rpm'),
    reverse,
    fit: z
      .object({
        speedDegree: z.number().int().min(1).max(6).default(3).describe('Highest power of speed in the loss polynomial'),
        torqueDegree: z.number().int().min(1).max(6).default(3).describe('Highest power of torque in the loss polynomial'),
        totalDegree: z.number().int().min(1).max(12).optional().describe('Highest combined power (speed + torque); default no cap'),
      })
      .strict()
      .default({ speedDegree: 3, torqueDegree: 3 })
      .describe('Loss polynomial P_loss = Σ c_ab·ω^a·τ^b'),
    grid: gridSize.describe('Size of the canonical grid the fitted polynomial is evaluated on'),
  })
  .strict();

export const dqModelSchema = z
  .object({
    kind: z.literal('dq-model'),
    description,
    polePairs: z.number().int().min(1).max(64).describe('Pole pairs p'),
    statorResistanceOhm: z.number().positive().describe('Phase resistance Rs, Ω'),
    ldH: z.number().positive().describe('d-axis inductance Ld, H'),
    lqH: z.number().positive().describe('q-axis inductance Lq, H (>= Ld for an interior magnet machine)'),
    fluxLinkageWb: z.number().positive().describe('Magnet flux linkage ψ, Wb (peak, amplitude-invariant)'),
    maxCurrentA: z.number().positive().describe('Peak phase current limit I_max, A'),
    dcVoltageV: z.number().positive().describe('DC bus voltage, V; V_max = V_dc/√3 with space-vector modulation'),
    maxSpeedRpm: z.number().positive().describe('Mechanical speed limit, rpm'),
    ironLoss: z
      .object({
        hysteresisWPerHz: z.number().min(0).default(0).describe('k_h: W per Hz of electrical frequency at rated flux'),
        eddyWPerHz2: z.number().min(0).default(0).describe('k_e: W per Hz² at rated flux'),
      })
      .strict()
      .default({ hysteresisWPerHz: 0, eddyWPerHz2: 0 }),
    mechanicalLoss: z
      .object({
        frictionNm: z.number().min(0).default(0).describe('Coulomb friction torque, N·m'),
        viscousNmPerRadS: z.number().min(0).default(0).describe('Viscous drag, N·m per rad/s'),
      })
      .strict()
      .default({ frictionNm: 0, viscousNmPerRadS: 0 }),
    inverterLoss: z
      .object({
        constantW: z.number().min(0).default(0).describe('Standing loss while energised, W'),
        perAmpW: z.number().min(0).default(0).describe('Switching and diode-drop loss per ampere of peak current, W/A'),
        resistanceOhm: z.number().min(0).default(0).describe('Conduction resistance per phase, Ω (loss 1.5·R·I²)'),
      })
      .strict()
      .default({ constantW: 0, perAmpW: 0, resistanceOhm: 0 }),
    grid: gridSize.describe('Size of the synthesised canonical grid'),
    reverse,
  })
  .strict();

export const machineDocSchema = z.discriminatedUnion('kind', [gridMapSchema, pointsMapSchema, dqModelSchema]);

export type GridMapDoc = z.infer<typeof gridMapSchema>;
export type PointsMapDoc = z.infer<typeof pointsMapSchema>;
export type DqModelDoc = z.infer<typeof dqModelSchema>;
export type MachineDoc = z.infer<typeof machineDocSchema>;
