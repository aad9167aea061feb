/**
 * Exit codes of the command line, derived from the same error catalogue as the API:
 * the error code printed on stderr is the API's, and the exit code follows its HTTP class.
 */
import { ERROR_CATALOGUE, type ErrorCode } from '../api/errors.js';

export const EXIT = {
  ok: 0,
  /** Our own fault (HTTP 5xx). */
  internal: 1,
  /** Bad arguments or request (HTTP 400). */
  usage: 2,
  /** Unknown document or file (HTTP 404). */
  notFound: 3,
  /** Input refused by the model: invalid map, drivetrain, cycle, … (HTTP 409/422). */
  invalid: 4,
  /** Too large (HTTP 413). */
  tooLarge: 5,
  /** Server unreachable or busy (--url mode, HTTP 429/503). */
  unavailable: 6,
} as const;

export function exitCodeFor(code: ErrorCode | string): number {
  const status = (ERROR_CATALOGUE as Record<string, { status: number }>)[code]?.status ?? 500;
  if (status === 400 || status === 401 || status === 415) return EXIT.usage;
  if (status === 404) return EXIT.notFound;
  if (status === 409 || status === 422) return EXIT.invalid;
  if (status === 413) return EXIT.tooLarge;
  if (status === 429 || status === 503) return EXIT.unavailable;
  return EXIT.internal;
}
