/** zod schemas of the solver's requests and answers (documentation and validation). */
import { z } from 'zod';
import { parseModeText } from '../../solver/modes.js';
import { MODES } from '../../solver/types.js';
import { ModelError } from '../../problem.js';

export const modeSchema = z.enum(MODES);

export const wheelPointSchema = z
  .object({
    wheelSpeedRpm: z.number().min(-1e6).max(1e6).describe('Wheel speed, rpm (negative: reversing); |n| <= 1e6'),
    wheelTorqueNm: z.number().min(-1e8).max(1e8).describe('Wheel torque, N·m (negative: braking when moving forward); |T| <= 1e8'),
  })
  .strict();

export const solveOptionsSchema = {
  modes: z.array(modeSchema).min(1).max(4).optional().describe('Only consider these modes (still only those the devices allow)'),
  strict: z.boolean().default(false).describe('Braking beyond what machines and battery absorb is infeasible instead of using friction brakes'),
  alternatives: z
    .boolean()
    .default(true)
    .describe('Include the best setting of every other feasible mode (false: answers about half the size, for simulations stepping fast)'),
};

/** A decimal number written in a query string (an empty or partly numeric entry is refused, never read as 0). */
function queryNumber(target: z.ZodNumber) {
  return z
    .string()
    .regex(/^\s*[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?\s*$/, 'must be a decimal number')
    .transform(Number)
    .pipe(target)
    .describe(target.description ?? '');
}

/** `true` or `false` in a query string, with the default and description of the body's flag. */
function queryFlag(target: z.ZodDefault<z.ZodBoolean>) {
  const fallback = target.parse(undefined);
  return z
    .enum(['true', 'false'])
    .default(fallback ? 'true' : 'false')
    .transform((v) => v === 'true')
    .describe(target.description ?? '');
}

/**
 * Query of the single-point GET: the wheel point and the solve options of the batch body, as
 * query parameters (`modes` comma-separated).
 */
export const pointQuerySchema = z
  .object({
    wheelSpeedRpm: queryNumber(wheelPointSchema.shape.wheelSpeedRpm),
    wheelTorqueNm: queryNumber(wheelPointSchema.shape.wheelTorqueNm),
    modes: z
      .string()
      .transform((text, ctx) => {
        try {
          return parseModeText(text, 'modes');
        } catch (err) {
          if (!(err instanceof ModelError)) throw err;
          ctx.addIssue({ code: 'custom', message: err.message });
          return z.NEVER;
        }
      })
      .optional()
      .describe(`Only consider these modes, comma-separated (${MODES.join(', ')})`),
    strict: queryFlag(solveOptionsSchema.strict),
    alternatives: queryFlag(solveOptionsSchema.alternatives),
  })
  .strict();


const machineStateSchema = z.object({
  speedRpm: z.number(),
  torqueNm: z.number(),
  electricalW: z.number().describe('DC electrical power, W (motoring > 0)'),
  lossW: z.number(),
  efficiency: z.number().nullable(),
});

export const modeSettingSchema = z.object({
  mode: modeSchema,
  sun: machineStateSchema,
  ring: machineStateSchema,
  meshLossW: z.number(),
  finalDriveLossW: z.number(),
  deviceW: z.number(),
  auxiliaryW: z.number(),
  batteryW: z.number().describe('Battery power, W (discharge > 0)'),
  systemEfficiency: z.number().nullable(),
  binding: z.array(z.string()).describe('Limits active at this setting'),
  electricWheelTorqueNm: z.number(),
  frictionBrakeNm: z.number().describe('Friction-brake share of the request, N·m (magnitude)'),
});

export const pointResultSchema = modeSettingSchema.partial().extend({
  wheelSpeedRpm: z.number(),
  wheelTorqueNm: z.number(),
  feasible: z.boolean(),
  reason: z.enum(['above-max-speed', 'above-motoring-limit', 'above-braking-limit', 'battery-limit', 'no-mode-available']).optional(),
  maxMotoringWheelNm: z.number().optional(),
  maxBrakingWheelNm: z.number().optional(),
  alternatives: z.array(modeSettingSchema),
});
