/**
 * Builds tables for the routes: small ones in process, large ones on the app's worker pool
 * (src/api/workerPool.ts) so the event loop keeps answering meanwhile. For a response body, a
 * large table is also joined and rendered (JSON, CSV or C header) on the pool (tableBodyRunner.ts).
 */
import { tableBody } from '../report/tableBody.js';
import type { Drivetrain } from '../solver/drivetrain.js';
import { buildTable } from '../solver/table.js';
import { buildTablePooled } from '../solver/tablePool.js';
import type { LookupTable } from '../solver/tableResult.js';
import type { ResolvedTableSpec } from '../solver/tableSpec.js';
import { tableBodyPooled } from './tableBodyRunner.js';
import type { WorkerPool } from './workerPool.js';

/** Tables with more cells than this go to the worker pool. */
export const POOL_THRESHOLD_CELLS = 5000;

/** A response body: text when rendered in process, its UTF-8 bytes when rendered on the pool. */
export type TableBody = string | Buffer;

/** `dtHash` is the drivetrain's content hash (the workers' cache key), `hash` the table's. */
export interface TableBuilder {
  build(dt: Drivetrain, dtHash: string, spec: ResolvedTableSpec, hash: string): Promise<LookupTable>;
  /** The table in `spec.format`, the same text on either path. */
  body(dt: Drivetrain, dtHash: string, spec: ResolvedTableSpec, hash: string): Promise<TableBody>;
}

function pooled(spec: ResolvedTableSpec): boolean {
  return spec.speedRpm.length * spec.torqueNm.length > POOL_THRESHOLD_CELLS;
}

export function createTableBuilder(workers: WorkerPool): TableBuilder {
  return {
    async build(dt, dtHash, spec, hash) {
      if (!pooled(spec)) return buildTable(dt, spec.spec, { hash });
      return buildTablePooled(dt, spec.spec, { pool: workers.get(), hash, drivetrainKey: dtHash });
    },
    async body(dt, dtHash, spec, hash) {
      if (!pooled(spec)) return tableBody(buildTable(dt, spec.spec, { hash }), spec.format);
      return tableBodyPooled(workers.get(), dt, dtHash, spec, hash);
    },
  };
}
