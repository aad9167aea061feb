/**
 * Worker-thread entry that finishes a large lookup table (run by piscina from tableBodyRunner.ts
 * on the app's worker pool): it joins the solved row blocks exactly as the in-process build does
 * (`assembleTable`: margin, smoothness) and renders the response body. Both take about a second
 * or more for a table of a million cells; here they leave the event loop free. The body comes
 * back as its UTF-8 bytes, moved rather than copied, so the event loop neither copies nor
 * encodes it before sending.
 */
import { move } from 'piscina';
import { tableBody } from '../report/tableBody.js';
import { assembleTable, type RowBlock } from '../solver/table.js';
import type { ResolvedTableSpec, TableFormat } from '../solver/tableSpec.js';

export interface TableBodyTask {
  /** Drivetrain name. */
  name: string;
  spec: ResolvedTableSpec;
  /** The solved rows, every row once. */
  blocks: RowBlock[];
  hash: string | null;
  format: TableFormat;
}

export default function renderTableBody(task: TableBodyTask): unknown {
  const table = assembleTable(task.name, task.spec, task.blocks, task.hash);
  // TextEncoder gives the bytes their own buffer (never a shared pool slab), so it can move.
  return move(new TextEncoder().encode(tableBody(table, task.format)));
}
