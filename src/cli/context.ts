/**
 * What every command needs: the documents (from folders, no server) or a server URL, and one
 * way to report failures — the API's error body on stderr and an exit code of its class.
 * The document store is loaded on first use, so usage errors and --help answer at once.
 */
import { existsSync, readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { ERROR_CATALOGUE, type ErrorCode } from '../api/errors.js';
import type { Drivetrain } from '../solver/drivetrain.js';
import type { Registry } from '../store/registry.js';
import { contentHash } from '../store/hash.js';
import { exitCodeFor } from './exitCodes.js';

export interface SourceOptions {
  maps: string;
  data: string;
  url?: string;
}

export class CliError extends Error {
  constructor(
    readonly code: ErrorCode,
    message: string,
    readonly path?: string,
  ) {
    super(message);
  }
}

export async function openRegistry(opts: SourceOptions): Promise<Registry> {
  const { Registry } = await import('../store/registry.js');
  const registry = new Registry({ mapsDir: opts.maps, dataDir: opts.data });
  await registry.load();
  return registry;
}

/** True when a --drivetrain value names a JSON file rather than a stored drivetrain. */
export function isFileRef(ref: string): boolean {
  return ref.endsWith('.json') || ref.includes('/');
}

/** A drivetrain by name from the registry, or from a JSON file (machines resolved by name). */
export function resolveDrivetrain(registry: Registry, ref: string): { dt: Drivetrain; hash: string; doc: unknown } {
  if (isFileRef(ref)) {
    const built = registry.buildInline(readJsonFile(ref, 'drivetrain'));
    return { dt: built.dt, hash: built.hash, doc: built.doc };
  }
  const entry = registry.getDrivetrainEntry(ref);
  const dt = registry.getDrivetrain(ref);
  if (!entry || !dt) throw notLoaded(registry, 'drivetrain', ref);
  return { dt, hash: registry.drivetrainContentHash(entry), doc: entry.doc };
}

/**
 * The error for a document that is not in the registry: the reason its file failed to load when
 * there is such a file (more useful than "not found"), else not-found.
 */
export function notLoaded(registry: Registry, what: 'drivetrain' | 'machine', name: string): CliError {
  const problem = registry.problems.find((p) => basename(p.file).replace(/(\.grid\.csv|\.points\.csv|\.json)$/, '') === name);
  if (problem) {
    const code = (problem.code in ERROR_CATALOGUE ? problem.code : what === 'machine' ? 'map-invalid' : 'drivetrain-invalid') as ErrorCode;
    return new CliError(code, `${what} "${name}" could not be loaded from ${problem.file}: ${problem.message}`, problem.path);
  }
  return new CliError('not-found', `no ${what} named "${name}" in the maps or data folders`);
}

export function readJsonFile(file: string, what: string): unknown {
  if (!existsSync(file)) throw new CliError('not-found', `no ${what} file ${file}`);
  try {
    return JSON.parse(readFileSync(file, 'utf8'));
  } catch (err) {
    throw new CliError('invalid-json', `${file} is not valid JSON: ${(err as Error).message}`);
  }
}

/** `route` (e.g. `/v1/machines`) under the server address, keeping any path prefix of the address. */
export function serverUrl(base: string, route: string): URL {
  let root: URL;
  try {
    root = new URL(base.endsWith('/') ? base : `${base}/`);
  } catch {
    throw new CliError('invalid-request', `--url "${base}" is not a URL`, '--url');
  }
  if (root.protocol !== 'http:' && root.protocol !== 'https:') throw new CliError('invalid-request', `--url "${base}" must be an http or https address`, '--url');
  return new URL(route.replace(/^\/+/, ''), root);
}

/** The error code of an HTTP status when the answer carries no error body. */
function codeOfStatus(status: number): ErrorCode {
  if (status === 404) return 'not-found';
  if (status === 413) return 'too-large';
  if (status === 429) return 'too-many-jobs';
  if (status === 503) return 'overloaded';
  if (status >= 400 && status < 500) return 'invalid-request';
  return 'internal';
}

/** Calls a running server; its error body becomes a CliError with the same code. */
export async function callServer(url: string, method: string, route: string, body?: unknown, accept = 'application/json'): Promise<Response> {
  let res: Response;
  try {
    res = await fetch(serverUrl(url, route), {
      method,
      headers: { ...(body !== undefined ? { 'content-type': 'application/json' } : {}), accept, ...(process.env.API_TOKEN ? { authorization: `Bearer ${process.env.API_TOKEN}` } : {}) },
      ...(body !== undefined ? { body: JSON.stringify(body) } : {}),
    });
  } catch (err) {
    if (err instanceof CliError) throw err;
    const cause = (err as { cause?: { message?: string } }).cause?.message;
    throw new CliError('overloaded', `cannot reach ${url}: ${(err as Error).message}${cause ? ` (${cause})` : ''}`);
  }
  if (!res.ok) {
    let parsed: { error?: { code?: string; message?: string; path?: string } } = {};
    try {
      parsed = (await res.json()) as typeof parsed;
    } catch {
      // not an error body
    }
    const code = parsed.error?.code;
    throw new CliError(
      code !== undefined && code in ERROR_CATALOGUE ? (code as ErrorCode) : codeOfStatus(res.status),
      parsed.error?.message ?? `HTTP ${res.status} from ${url}`,
      parsed.error?.path,
    );
  }
  return res;
}

/**
 * Prints the error body to stderr and returns the exit code. Errors of the CLI, the API and the
 * core (CliError, ApiError, ModelError, the store's errors) all carry a catalogue code; anything
 * else is reported as internal.
 */
export function reportError(err: unknown): number {
  const e = err as { code?: unknown; path?: unknown; message?: unknown } | null;
  const known = err instanceof Error && typeof e!.code === 'string' && e!.code in ERROR_CATALOGUE;
  const code: ErrorCode = known ? (e!.code as ErrorCode) : 'internal';
  const path = known && typeof e!.path === 'string' ? e!.path : undefined;
  const text = err instanceof Error ? err.message : String(err);
  const message = known ? text : `internal error: ${text}`;
  process.stderr.write(JSON.stringify({ error: { code, message, ...(path ? { path } : {}) } }) + '\n');
  return exitCodeFor(code);
}

export { contentHash };
