/** Shared zod schemas of the HTTP layer. */
import { z } from 'zod';
import { machineName } from '../machine/schema.js';
import { ERROR_CATALOGUE } from './errors.js';

export const errorBodySchema = z
  .object({
    error: z.object({
      code: z.enum(Object.keys(ERROR_CATALOGUE) as [keyof typeof ERROR_CATALOGUE, ...(keyof typeof ERROR_CATALOGUE)[]]),
      message: z.string(),
      path: z.string().optional(),
    }),
  })
  .describe('Error body; `code` is stable, `message` is for people, `path` names the offending field');

export const nameParams = z.object({ name: machineName });

/** Standard error responses for documentation. */
export const errorResponses = {
  400: errorBodySchema,
  404: errorBodySchema,
  413: errorBodySchema,
  422: errorBodySchema,
} as const;
