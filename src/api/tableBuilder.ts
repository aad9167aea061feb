/**
 * Builds tables for the routes: small ones in process, large ones on the app's worker pool
 * (src/api/workerPool.ts) so the event loop keeps answering meanwhile.
 */
import type { Drivetrain } from '../solver/drivetrain.js';
import { buildTable } from '../solver/table.js';
import { buildTablePooled } from '../solver/tablePool.js';
import type { LookupTable } from '../solver/tableResult.js';
import type { ResolvedTableSpec } from '../solver/tableSpec.js';
import type { WorkerPool } from './workerPool.js';

/** Tables with more cells than this go to the worker pool. */
export const POOL_THRESHOLD_CELLS = 5000;

export interface TableBuilder {
  build(dt: Drivetrain, spec: ResolvedTableSpec, hash: string): Promise<LookupTable>;
}

export function createTableBuilder(workers: WorkerPool): TableBuilder {
  return {
    async build(dt, spec, hash) {
      const cells = spec.speedRpm.length * spec.torqueNm.length;
      if (cells <= POOL_THRESHOLD_CELLS) return buildTable(dt, spec.spec, { hash });
      return buildTablePooled(dt, spec.spec, { pool: workers.get(), hash });
    },
  };
}
