/**
 * Worker-thread entry that finishes a large lookup table (run by piscina from tableBodyRunner.ts
 * on the app's worker pool): it joins the solved row blocks exactly as the in-process build does
 * (`assembleTable`: margin, smoothness) and renders the response body. Both take about a second
 * or more for a table of a million cells; here they leave the event loop free. The body comes
 * back as its UTF-8 bytes, moved rather than copied, so the event loop neither copies nor
 * encodes it before sending. A ModelError comes back as data (workerReply.ts).
 */
import { move, transferableSymbol, valueSymbol } from 'piscina';
import { tableBody } from '../report/tableBody.js';
import { assembleTable, type RowBlock } from '../solver/table.js';
import type { ResolvedTableSpec, TableFormat } from '../solver/tableSpec.js';
import { replyOf, type WorkerReply } from './workerReply.js';

export interface TableBodyTask {
  /** Drivetrain name. */
  name: string;
  spec: ResolvedTableSpec;
  /** The solved rows, every row once. */
  blocks: RowBlock[];
  hash: string | null;
  format: TableFormat;
}

export type TableBodyReply = WorkerReply<Uint8Array>;

export default function renderTableBody(task: TableBodyTask): unknown {
  // TextEncoder gives the bytes their own buffer (never a shared pool slab), so it can move.
  const reply: TableBodyReply = replyOf(() => new TextEncoder().encode(tableBody(assembleTable(task.name, task.spec, task.blocks, task.hash), task.format)));
  if (!reply.ok) return reply;
  return move({ [transferableSymbol]: [reply.value.buffer], [valueSymbol]: reply } as Parameters<typeof move>[0]);
}
