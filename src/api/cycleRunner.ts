/**
 * Drive-cycle requests on the app's worker pool (src/api/workerPool.ts), so a long cycle keeps
 * the event loop free. The worker returns the response body; a ModelError raised there is raised
 * here again with its code, message and path (and so answered 4xx as in process).
 */
import { randomUUID } from 'node:crypto';
import type { Drivetrain } from '../solver/drivetrain.js';
import type { TablePool } from '../solver/tablePool.js';
import { workerScript, type WorkerScript } from '../solver/workerScript.js';
import type { CycleJobOptions } from '../vehicle/cycleJob.js';
import type { Cycle, Vehicle } from '../vehicle/schema.js';
import type { CycleBodyFormat, CycleTask, CycleTaskReply } from './cycleWorker.js';
import { valueOf } from './workerReply.js';

let script: WorkerScript | undefined;

export interface PooledCycleOptions {
  /** Cache key of the drivetrain in the workers: its content hash (default: unique to this job). */
  key?: string;
  signal?: AbortSignal;
}

/** Solves a cycle job on a worker thread of `pool`; the body equals {@link cycleBody}'s in process. */
export async function cycleBodyPooled(
  pool: TablePool,
  dt: Drivetrain,
  job: { vehicle: Vehicle; cycle: Cycle; options: CycleJobOptions },
  format: CycleBodyFormat,
  opts: PooledCycleOptions = {},
): Promise<string> {
  script ??= workerScript(import.meta.url, 'cycleWorker');
  const task: CycleTask = {
    key: opts.key !== undefined ? `drivetrain-${opts.key}` : `cycle-${randomUUID()}`,
    name: dt.name,
    doc: dt.doc,
    sun: dt.sun,
    ring: dt.ring,
    vehicle: job.vehicle,
    cycle: job.cycle,
    options: job.options,
    format,
  };
  const reply = await pool.runScript<CycleTask, CycleTaskReply>(script, task, opts.signal);
  return valueOf(reply);
}
