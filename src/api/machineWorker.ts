/**
 * Worker-thread entry for machine documents (run by piscina from machineRunner.ts on the app's
 * worker pool). A task carries a document already checked against its schema; the worker builds
 * the canonical map, its summary and the document's content hash exactly as the registry does in
 * process ({@link buildMachine}), and moves the map's arrays back instead of copying them. A
 * ModelError is returned as data: its code and field path would not survive the thread boundary
 * as a thrown error.
 */
import { move, transferableSymbol, valueSymbol } from 'piscina';
import type { MachineDoc } from '../machine/schema.js';
import { buildMachine, type BuiltMachine } from '../store/registry.js';
import { replyOf, type WorkerReply } from './workerReply.js';

export interface MachineTask {
  name: string;
  doc: MachineDoc;
}

export type MachineTaskReply = WorkerReply<BuiltMachine>;

/** The distinct buffers under a map's arrays (each is its own allocation today; a shared one is sent once). */
function mapBuffers(built: BuiltMachine): ArrayBuffer[] {
  const m = built.map;
  const arrays = [m.speedRadS, m.torqueNm, m.lossW, m.maxTorqueNm, m.minTorqueNm];
  return [...new Set(arrays.map((a) => a.buffer as ArrayBuffer))];
}

export default function runMachineTask(task: MachineTask): unknown {
  const reply: MachineTaskReply = replyOf(() => buildMachine(task.name, task.doc));
  if (!reply.ok) return reply;
  return move({ [transferableSymbol]: mapBuffers(reply.value), [valueSymbol]: reply } as Parameters<typeof move>[0]);
}
