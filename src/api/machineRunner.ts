/**
 * Machine documents built on the app's worker pool (src/api/workerPool.ts), so a points fit or a
 * dq-model grid keeps the event loop free. The schema check stays with the caller (the registry);
 * the worker returns the canonical map, summary and content hash as plain data, equal to the
 * in-process build. A ModelError raised there is raised here again with its code, message and
 * path (and so answered 4xx as in process).
 */
import type { MachineDoc } from '../machine/schema.js';
import type { TablePool } from '../solver/tablePool.js';
import { workerScript, type WorkerScript } from '../solver/workerScript.js';
import { buildMachine, type BuiltMachine, type MachineBuilder } from '../store/registry.js';
import type { MachineTask, MachineTaskReply } from './machineWorker.js';
import { valueOf } from './workerReply.js';
import type { WorkerPool } from './workerPool.js';

let script: WorkerScript | undefined;

/**
 * Grid documents with at least this many cells are built on the pool. Measured at 400 × 400 the
 * build and content hash take about 65 ms (loss grid) to 200 ms (efficiency grid) against about
 * 10 ms to send the document to a thread; under 200 × 200 they stay below about 15 ms and build
 * in process.
 */
export const POOLED_GRID_CELLS = 40_000;

/** Whether a document is built on the pool: every points fit and dq model, large grids. */
export function buildsOnPool(doc: MachineDoc): boolean {
  return doc.kind !== 'grid' || doc.speedRpm.length * doc.torqueNm.length >= POOLED_GRID_CELLS;
}

/** Builds a validated document on a worker thread of `pool`; the result equals {@link buildMachine}'s. */
export async function buildMachinePooled(pool: TablePool, name: string, doc: MachineDoc, signal?: AbortSignal): Promise<BuiltMachine> {
  script ??= workerScript(import.meta.url, 'machineWorker');
  const reply = await pool.runScript<MachineTask, MachineTaskReply>(script, { name, doc }, signal);
  const { map, summary, hash } = valueOf(reply);
  // The in-process map is frozen; the copy that crossed the thread boundary is frozen again.
  return { map: Object.freeze(map), summary, hash };
}

/** The registry's builder for the API: heavy documents on the app's pool (started on first use), the rest in process. */
export function pooledMachineBuilder(workers: WorkerPool): MachineBuilder {
  return (name, doc) => (buildsOnPool(doc) ? buildMachinePooled(workers.get(), name, doc) : buildMachine(name, doc));
}
