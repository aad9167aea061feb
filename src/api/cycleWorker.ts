/**
 * Worker-thread entry for drive-cycle requests (run by piscina from cycleRunner.ts on the app's
 * worker pool). A task carries the drivetrain as plain data (rebuilt and cached per key with the
 * table worker's cache), the vehicle, the checked cycle and the job's options. The worker solves
 * the job and renders the response body (JSON text or the SVG plot), so the event loop only
 * sends it. A ModelError comes back as data (workerReply.ts).
 */
import { plotCycle } from '../report/svg/plotCycle.js';
import type { Drivetrain } from '../solver/drivetrain.js';
import { drivetrainFor, type DrivetrainRef } from '../solver/tableWorker.js';
import { runCycleJob, type CycleJobOptions } from '../vehicle/cycleJob.js';
import type { Cycle, Vehicle } from '../vehicle/schema.js';
import { replyOf, type WorkerReply } from './workerReply.js';

/** What the body holds: the answer as JSON, or the SVG plot of the run (needs `series`). */
export type CycleBodyFormat = 'json' | 'svg';

export interface CycleTask extends DrivetrainRef {
  vehicle: Vehicle;
  cycle: Cycle;
  options: CycleJobOptions;
  format: CycleBodyFormat;
}

export type CycleTaskReply = WorkerReply<string>;

/** Solves a cycle job and renders its response body (the same text in process and on a worker). */
export function cycleBody(dt: Drivetrain, vehicle: Vehicle, cycle: Cycle, options: CycleJobOptions, format: CycleBodyFormat): string {
  const answer = runCycleJob(dt, vehicle, cycle, options);
  return format === 'svg' ? plotCycle(answer.result, { title: `${dt.name}: ${answer.result.cycle}` }) : JSON.stringify(answer);
}

export default function runCycleTask(task: CycleTask): CycleTaskReply {
  return replyOf(() => cycleBody(drivetrainFor(task), task.vehicle, task.cycle, task.options, task.format));
}
