/** zod descriptions of cycle answers (documentation; answers are serialised as they are). */
import { z } from 'zod';
import { LAYOUTS } from '../../vehicle/compare.js';
import { modeSchema } from './solverSchemas.js';

const n = z.number();

export const cycleResultSchema = z.object({
  cycle: z.string(),
  drivetrain: z.string(),
  steps: n,
  durationS: n,
  distanceKm: n,
  batteryWh: n.describe('Net battery energy, Wh (discharge > 0)'),
  whPerKm: n.nullable(),
  tractiveWh: n.describe('Positive wheel work delivered, Wh'),
  wheelWorkWh: n.describe('Net wheel work delivered, Wh'),
  regeneratedWh: n.describe('Battery energy recovered, Wh'),
  frictionBrakedWh: n,
  shortfallWh: n.describe('Wheel work asked for but not delivered, Wh'),
  losses: z.object({ sunMachineWh: n, ringMachineWh: n, meshWh: n, finalDriveWh: n, devicesWh: n, auxiliaryWh: n }),
  modes: z.array(z.object({ mode: modeSchema, timeS: n, steps: n, batteryWh: n })),
  modeSwitches: n,
  unfollowed: z
    .array(z.object({ timeS: n, durationS: n, speedKph: n, requestedWheelTorqueNm: n, deliveredWheelTorqueNm: n, reason: z.string() }))
    .describe('Every step the drivetrain could not follow'),
  rangeKm: n.nullable().describe('Range on repeats of this cycle for usableBatteryWh'),
  series: z
    .object({
      timeS: z.array(n),
      durationS: z.array(n),
      speedKph: z.array(n),
      gradePct: z.array(n),
      wheelSpeedRpm: z.array(n),
      requestedWheelTorqueNm: z.array(n),
      electricWheelTorqueNm: z.array(n),
      frictionBrakeNm: z.array(n),
      mode: z.array(modeSchema.nullable()),
      batteryW: z.array(n),
      sunSpeedRpm: z.array(n),
      sunTorqueNm: z.array(n),
      ringSpeedRpm: z.array(n),
      ringTorqueNm: z.array(n),
    })
    .optional()
    .describe('Per-step series (on request)'),
});

export const layoutComparisonSchema = z.object({
  cycle: z.string(),
  drivetrain: z.string(),
  baseline: z.enum(LAYOUTS),
  baselineRule: z.string(),
  rows: z.array(
    z.object({
      layout: z.enum(LAYOUTS),
      description: z.string(),
      modes: z.array(modeSchema),
      batteryWh: n,
      distanceKm: n,
      whPerKm: n.nullable(),
      unfollowedSteps: n,
      shortfallWh: n,
      savingsPct: n.nullable(),
      baseline: z.boolean(),
    }),
  ),
});

export const cycleBoundSchema = z.object({
  switchCostWh: n,
  boundWh: n.describe('Least battery energy + switch costs of any mode sequence, Wh'),
  boundEnergyWh: n,
  boundSwitches: n,
  stepwiseWh: n.describe('Step-by-step optimum with its switches charged, Wh'),
  stepwiseEnergyWh: n,
  stepwiseSwitches: n,
  gapWh: n,
  gapPct: n.nullable(),
  boundModeTimeS: z.record(z.string(), n),
});

export const cycleAnswerSchema = z.object({
  result: cycleResultSchema,
  comparison: layoutComparisonSchema.optional(),
  bounds: z.array(cycleBoundSchema).optional(),
});
