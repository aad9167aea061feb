/**
 * The app's one pool of worker threads (src/solver/tablePool.ts): large tables, every
 * drive-cycle job and heavy machine builds (points fits, dq models, large grids) run on it, so
 * the event loop keeps answering meanwhile. Created on first use, closed with the app.
 */
import { TablePool } from '../solver/tablePool.js';

export interface WorkerPool {
  /** The pool, started on first call. */
  get(): TablePool;
  /** Lets running tasks finish, then stops the threads; a later get() starts a new pool. */
  close(): Promise<void>;
}

export function createWorkerPool(threads?: number): WorkerPool {
  let pool: TablePool | undefined;
  return {
    get() {
      pool ??= new TablePool(threads ? { threads } : {});
      return pool;
    },
    async close() {
      const p = pool;
      pool = undefined;
      await p?.close();
    },
  };
}
