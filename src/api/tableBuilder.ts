/**
 * Builds tables for the routes: small ones in process, large ones on a shared worker pool
 * (created on first use, closed with the app) so the event loop keeps answering meanwhile.
 */
import type { Drivetrain } from '../solver/drivetrain.js';
import { buildTable } from '../solver/table.js';
import { buildTablePooled, TablePool } from '../solver/tablePool.js';
import type { LookupTable } from '../solver/tableResult.js';
import type { ResolvedTableSpec } from '../solver/tableSpec.js';

/** Tables with more cells than this go to the worker pool. */
export const POOL_THRESHOLD_CELLS = 5000;

export interface TableBuilder {
  build(dt: Drivetrain, spec: ResolvedTableSpec, hash: string): Promise<LookupTable>;
  close(): Promise<void>;
}

export function createTableBuilder(threads?: number): TableBuilder {
  let pool: TablePool | undefined;
  return {
    async build(dt, spec, hash) {
      const cells = spec.speedRpm.length * spec.torqueNm.length;
      if (cells <= POOL_THRESHOLD_CELLS) return buildTable(dt, spec.spec, { hash });
      pool ??= new TablePool(threads ? { threads } : {});
      return buildTablePooled(dt, spec.spec, { pool, hash });
    },
    async close() {
      await pool?.close();
      pool = undefined;
    },
  };
}
