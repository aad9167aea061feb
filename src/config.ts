/** Service configuration from the environment, with defaults. */
export interface Config {
  port: number;
  host: string;
  mapsDir: string;
  dataDir: string;
  logLevel: string;
  /** Bearer token required on /v1 routes when set. */
  apiToken: string | undefined;
  /** Largest number of points in one operating-points request. */
  maxBatchPoints: number;
  /** Largest request body, bytes. */
  bodyLimitBytes: number;
  /** Concurrent table/cycle/sweep jobs before the service answers 429. */
  maxJobs: number;
  /** Longest a client may take to send a whole request, ms (0: no limit); handlers are bounded by the job cap and work limits instead. */
  requestTimeoutMs: number;
  /** Event-loop delay above which the service sheds load with 503, ms (0: off). */
  maxEventLoopDelayMs: number;
  /** Size of the kept single-point answers, MiB (0: keep none). */
  pointCacheMiB: number;
}

function intFrom(env: NodeJS.ProcessEnv, key: string, fallback: number): number {
  const raw = env[key];
  if (raw === undefined || raw === '') return fallback;
  const v = Number(raw);
  if (!Number.isInteger(v) || v < 0) throw new Error(`${key} must be a non-negative integer, got "${raw}"`);
  return v;
}

export function configFromEnv(env: NodeJS.ProcessEnv = process.env): Config {
  return {
    port: intFrom(env, 'PORT', 8080),
    host: env.HOST || '127.0.0.1',
    mapsDir: env.MAPS_DIR || './maps',
    dataDir: env.DATA_DIR || './data',
    logLevel: env.LOG_LEVEL || 'info',
    apiToken: env.API_TOKEN || undefined,
    maxBatchPoints: intFrom(env, 'MAX_BATCH_POINTS', 200_000),
    bodyLimitBytes: intFrom(env, 'BODY_LIMIT_BYTES', 8 * 1024 * 1024),
    maxJobs: intFrom(env, 'MAX_JOBS', 4),
    requestTimeoutMs: intFrom(env, 'REQUEST_TIMEOUT_MS', 300_000),
    maxEventLoopDelayMs: intFrom(env, 'MAX_EVENT_LOOP_DELAY_MS', 2000),
    pointCacheMiB: intFrom(env, 'POINT_CACHE_MIB', 32),
  };
}
