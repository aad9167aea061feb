/**
 * Worker-thread entry for table rows (run by piscina from tablePool.ts). Each task carries the
 * drivetrain document and the two canonical machine maps (plain data); the drivetrain is
 * rebuilt here once per key and cached. Returns the solved rows with their buffers transferred.
 * Other worker scripts run on the same threads (cycle requests: src/api/cycleWorker.ts) share
 * the cache through {@link drivetrainFor}.
 */
import { move, transferableSymbol, valueSymbol } from 'piscina';
import type { MachineMap } from '../machine/map.js';
import { buildDrivetrain, type Drivetrain, type DrivetrainDoc } from './drivetrain.js';
import { blockBuffers, computeRows, type RowBlock, type RowJob } from './table.js';

/** A drivetrain sent to a worker as plain data: its document and canonical machine maps. */
export interface DrivetrainRef {
  /** Cache key of the drivetrain (content hash, or unique per job when none is given). */
  key: string;
  name: string;
  doc: DrivetrainDoc;
  sun: MachineMap;
  ring: MachineMap;
}

export interface RowTask extends DrivetrainRef {
  job: RowJob;
}

const CACHE_SIZE = 4;
const cache = new Map<string, Drivetrain>();

/** The drivetrain of a task, rebuilt from its document and maps once per key (a few kept per thread). */
export function drivetrainFor(task: DrivetrainRef): Drivetrain {
  const hit = cache.get(task.key);
  if (hit) return hit;
  const maps = new Map([
    [task.doc.sunMachine, task.sun],
    [task.doc.ringMachine, task.ring],
  ]);
  const dt = buildDrivetrain(task.name, task.doc, (n) => maps.get(n));
  if (cache.size >= CACHE_SIZE) cache.delete(cache.keys().next().value!);
  cache.set(task.key, dt);
  return dt;
}

/** Solves the task's rows; the block's buffers move to the caller instead of being copied. */
export default function runRows(task: RowTask): unknown {
  const block: RowBlock = computeRows(drivetrainFor(task), task.job);
  return move({ [transferableSymbol]: blockBuffers(block), [valueSymbol]: block } as Parameters<typeof move>[0]);
}
