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
import { movableBuffers } from './transfer.js';
import { replyOf, type WorkerReply } from './workerReply.js';

export interface MachineTask {
  name: string;
  doc: MachineDoc;
}

export type MachineTaskReply = WorkerReply<BuiltMachine>;

function mapArrays(built: BuiltMachine): ArrayBufferView[] {
  const m = built.map;
  return [m.speedRadS, m.torqueNm, m.lossW, m.maxTorqueNm, m.minTorqueNm];
}

export default function runMachineTask(task: MachineTask): unknown {
  const reply: MachineTaskReply = replyOf(() => buildMachine(task.name, task.doc));
  if (!reply.ok) return reply;
  return move({ [transferableSymbol]: movableBuffers(mapArrays(reply.value)), [valueSymbol]: reply } as Parameters<typeof move>[0]);
}
