/**
 * Large tables on a worker-thread pool (piscina). The speed axis is cut into blocks of rows;
 * each worker rebuilds the drivetrain from its document and machine maps (cached by key) and
 * solves its rows; the blocks are joined and the margin applied here exactly as in
 * {@link buildTable}, so the result is the same table.
 *
 * The worker script sits next to this file: `tableWorker.js` when compiled, else
 * `tableWorker.ts`, which is loaded through tsx's loader (`--import <tsx>`) in each worker.
 * The same threads run tasks of other worker scripts ({@link TablePool.runScript}), so one pool
 * per process serves tables and drive cycles alike.
 */
import { availableParallelism } from 'node:os';
import { randomUUID } from 'node:crypto';
import { Piscina } from 'piscina';
import type { Drivetrain } from './drivetrain.js';
import { assembleTable, rowJob, type RowBlock, type TableOptions } from './table.js';
import { resolveTableSpec, type ResolvedTableSpec, type TableSpecInput } from './tableSpec.js';
import type { LookupTable } from './tableResult.js';
import type { RowTask } from './tableWorker.js';
import { workerScript, type WorkerScript } from './workerScript.js';

export interface TablePoolOptions {
  /** Worker threads (default: available parallelism). */
  threads?: number;
  /** Idle time before a worker exits, ms (default 30 s). */
  idleTimeoutMs?: number;
}

/** A pool of worker threads for tables (and other jobs); share one per process and close it on shutdown. */
export class TablePool {
  readonly threads: number;
  private readonly pool: Piscina<unknown, unknown>;
  private readonly execArgv: readonly string[];

  constructor(options: TablePoolOptions = {}) {
    this.threads = Math.max(1, Math.floor(options.threads ?? availableParallelism()));
    const script = workerScript(import.meta.url, 'tableWorker');
    this.execArgv = script.execArgv;
    this.pool = new Piscina<unknown, unknown>({
      filename: script.filename,
      execArgv: script.execArgv,
      minThreads: 0,
      maxThreads: this.threads,
      idleTimeout: options.idleTimeoutMs ?? 30_000,
    });
  }

  /** Solves one block of table rows. */
  run(task: RowTask, signal?: AbortSignal): Promise<RowBlock> {
    return this.pool.run(task, signal ? { signal } : {}) as Promise<RowBlock>;
  }

  /**
   * Runs one task of another worker script (found by {@link workerScript}; its default export
   * gets the task) on these threads. The script must load the way the table worker does
   * (both compiled, or both through tsx).
   */
  runScript<T, R>(script: WorkerScript, task: T, signal?: AbortSignal): Promise<R> {
    if (script.execArgv.join('\0') !== this.execArgv.join('\0')) {
      return Promise.reject(new Error(`worker script ${script.filename} needs other thread options than the pool's`));
    }
    return this.pool.run(task, { filename: script.filename, ...(signal ? { signal } : {}) }) as Promise<R>;
  }

  close(): Promise<void> {
    return this.pool.close();
  }
}

export interface PooledTableOptions extends TableOptions, RowBlockOptions {
  /** Pool to use; when absent a pool is made for this table and closed afterwards. */
  pool?: TablePool;
  /** Threads of the temporary pool when `pool` is absent. */
  threads?: number;
}

export interface RowBlockOptions {
  /** Rows per task (default: about four tasks per thread). */
  chunkRows?: number;
  /** Cache key of the drivetrain in the workers (its content hash); default: unique to this call. */
  drivetrainKey?: string;
  signal?: AbortSignal;
  /** Called as row blocks finish: cells done, cells in all. */
  onProgress?: (done: number, total: number) => void;
}

/** Solves the rows of a resolved table spec on `pool`, in blocks (not yet joined: see assembleTable). */
export function solveRowBlocks(pool: TablePool, dt: Drivetrain, resolved: ResolvedTableSpec, opts: RowBlockOptions = {}): Promise<RowBlock[]> {
  const nS = resolved.speedRpm.length;
  const nT = resolved.torqueNm.length;
  const chunk = Math.max(1, Math.floor(opts.chunkRows ?? Math.ceil(nS / (pool.threads * 4))));
  const key = opts.drivetrainKey !== undefined ? `drivetrain-${opts.drivetrainKey}` : `table-${randomUUID()}`;
  let done = 0;
  const tasks: Promise<RowBlock>[] = [];
  for (let start = 0; start < nS; start += chunk) {
    const end = Math.min(nS, start + chunk);
    const task: RowTask = { key, name: dt.name, doc: dt.doc, sun: dt.sun, ring: dt.ring, job: rowJob(resolved, start, end) };
    tasks.push(
      pool.run(task, opts.signal).then((block) => {
        done += (block.rowEnd - block.rowStart) * nT;
        opts.onProgress?.(done, nS * nT);
        return block;
      }),
    );
  }
  return Promise.all(tasks);
}

/** Builds a lookup table on worker threads; the result equals {@link buildTable}'s. */
export async function buildTablePooled(dt: Drivetrain, spec: TableSpecInput, opts: PooledTableOptions = {}): Promise<LookupTable> {
  const resolved = resolveTableSpec(spec, opts.maxCells);
  const pool = opts.pool ?? new TablePool(opts.threads === undefined ? {} : { threads: opts.threads });
  try {
    const blocks = await solveRowBlocks(pool, dt, resolved, opts);
    return assembleTable(dt.name, resolved, blocks, opts.hash ?? null);
  } finally {
    if (!opts.pool) await pool.close();
  }
}
