import type { z } from 'zod';

/**
 * Errors raised below the HTTP layer (the computational core and the document store). Each carries a stable code from the catalogue
 * (src/api/errors.ts maps codes to HTTP statuses) and, where it applies, the path of the
 * offending field in dotted/indexed form (e.g. `lossW[3][7]`).
 */
export const PROBLEM_CODES = [
  'invalid-request',
  'map-invalid',
  'fit-failed',
  'drivetrain-invalid',
  'gearset-invalid',
  'vehicle-invalid',
  'cycle-invalid',
  'sweep-invalid',
  'table-invalid',
  'not-found',
  'too-large',
  'unknown-machine',
  'infeasible',
  'read-only',
  'in-use',
] as const;

export type ProblemCode = (typeof PROBLEM_CODES)[number];

export class ModelError extends Error {
  readonly code: ProblemCode;
  readonly path?: string;
  constructor(code: ProblemCode, message: string, path?: string) {
    super(message);
    this.name = 'ModelError';
    this.code = code;
    if (path !== undefined) this.path = path;
  }

  /** The same error with its path placed under `base` (for a document nested in a request). */
  under(base: string): ModelError {
    const p = this.path;
    return new ModelError(this.code, this.message, p === undefined ? base : p.startsWith('[') ? base + p : `${base}.${p}`);
  }
}

/** A validation issue's path as `base.a.b[3].c` (numbers become indices). */
export function fieldPath(path: readonly PropertyKey[], base = ''): string {
  let s = base;
  for (const p of path) s = typeof p === 'number' ? `${s}[${p}]` : s ? `${s}.${String(p)}` : String(p);
  return s;
}

/** Joins a base path and a key or index into `a.b[3].c` form. */
export function joinPath(base: string | undefined, key: string | number): string {
  return fieldPath([key], base ?? '');
}

/**
 * Parses `value` with a zod schema; the first issue becomes a ModelError with `code`, the field
 * path under `base`, and a message that starts with that path. A schema issue that is too many
 * array elements may take its own code (`tooManyCode`, e.g. too-large).
 */
export function parseOrThrow<S extends z.ZodType>(
  schema: S,
  value: unknown,
  code: ProblemCode,
  base = '',
  tooManyCode?: ProblemCode,
): z.output<S> {
  const r = schema.safeParse(value);
  if (r.success) return r.data;
  const issue = r.error.issues[0]!;
  const path = fieldPath(issue.path, base);
  const tooMany = tooManyCode !== undefined && issue.code === 'too_big' && (issue as { origin?: string }).origin === 'array';
  throw new ModelError(tooMany ? tooManyCode : code, path ? `${path}: ${issue.message}` : issue.message, path || undefined);
}
