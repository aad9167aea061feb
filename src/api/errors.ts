/**
 * The one catalogue of error codes. Every error body is
 * `{ "error": { "code", "message", "path"? } }`; codes are stable kebab-case identifiers.
 * 4xx are the caller's mistakes; 5xx only our own faults (or deliberate load shedding).
 */
import type { ProblemCode } from '../problem.js';

export interface CatalogueEntry {
  status: number;
  /** What the code means, for the documentation. */
  meaning: string;
}

export const ERROR_CATALOGUE = {
  'invalid-request': { status: 400, meaning: 'The request does not match its schema (the path names the field).' },
  'invalid-json': { status: 400, meaning: 'The body is not valid JSON (NaN and Infinity are not JSON).' },
  'invalid-name': { status: 400, meaning: 'A name in the path does not match [a-z0-9][a-z0-9-]{0,63}.' },
  unauthorized: { status: 401, meaning: 'A bearer token is required and was missing or wrong.' },
  'not-found': { status: 404, meaning: 'No such document or route.' },
  'in-use': { status: 409, meaning: 'The document is used by another one (e.g. a machine by a drivetrain).' },
  'read-only': { status: 409, meaning: 'The document comes from MAPS_DIR and cannot be deleted through the API.' },
  'too-large': { status: 413, meaning: 'The body or the requested work is larger than allowed.' },
  'unsupported-media-type': { status: 415, meaning: 'The body has a content type this route does not take.' },
  'map-invalid': { status: 422, meaning: 'A machine map is malformed or physically inconsistent.' },
  'fit-failed': { status: 422, meaning: 'Measured points cannot be fitted (too few, or ill-conditioned).' },
  'drivetrain-invalid': { status: 422, meaning: 'A drivetrain document is inconsistent.' },
  'gearset-invalid': { status: 422, meaning: 'Tooth counts break a planetary geometry rule.' },
  'unknown-machine': { status: 422, meaning: 'A drivetrain names a machine that is not loaded.' },
  'vehicle-invalid': { status: 422, meaning: 'A vehicle document is inconsistent.' },
  'cycle-invalid': { status: 422, meaning: 'A drive cycle is malformed (time order, lengths, accelerations).' },
  'sweep-invalid': { status: 422, meaning: 'A design-sweep specification is inconsistent.' },
  'table-invalid': { status: 422, meaning: 'A table request is inconsistent (axes, size).' },
  infeasible: { status: 422, meaning: 'The request cannot be met by the drivetrain.' },
  'too-many-jobs': { status: 429, meaning: 'Too many table or cycle jobs are running; retry later.' },
  internal: { status: 500, meaning: 'A fault of ours; the log has the request id.' },
  overloaded: { status: 503, meaning: 'The service is shedding load; retry after the given delay.' },
  'request-timeout': { status: 503, meaning: 'The request took longer than the service allows.' },
} as const satisfies Record<string, CatalogueEntry>;

export type ErrorCode = keyof typeof ERROR_CATALOGUE;

// Every core problem code must have a catalogue entry.
const _coreCodesCovered: Record<ProblemCode, CatalogueEntry> = ERROR_CATALOGUE;
void _coreCodesCovered;

export interface ErrorBody {
  error: { code: ErrorCode; message: string; path?: string };
}

export class ApiError extends Error {
  readonly code: ErrorCode;
  readonly path?: string;
  readonly statusCode: number;
  constructor(code: ErrorCode, message: string, path?: string) {
    super(message);
    this.name = 'ApiError';
    this.code = code;
    this.statusCode = ERROR_CATALOGUE[code].status;
    if (path !== undefined) this.path = path;
  }
}

export function errorBody(code: ErrorCode, message: string, path?: string): ErrorBody {
  return { error: path === undefined ? { code, message } : { code, message, path } };
}
