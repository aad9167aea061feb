/**
 * Large tables for the routes, entirely on the app's worker pool: the rows are solved in blocks
 * on its threads (as `buildTablePooled` does), then one task (tableBodyWorker.ts) joins the
 * blocks and renders the body. The event loop only hands data over: the blocks move to the
 * worker and the body's UTF-8 bytes move back, byte for byte the text {@link tableBody} gives for
 * the table `buildTable` makes in process.
 */
import { move, transferableSymbol, valueSymbol } from 'piscina';
import type { Drivetrain } from '../solver/drivetrain.js';
import type { RowBlock } from '../solver/table.js';
import { solveRowBlocks, type TablePool } from '../solver/tablePool.js';
import type { ResolvedTableSpec } from '../solver/tableSpec.js';
import { workerScript, type WorkerScript } from '../solver/workerScript.js';
import type { TableBodyReply, TableBodyTask } from './tableBodyWorker.js';
import { movableBuffers } from './transfer.js';
import { valueOf } from './workerReply.js';

let script: WorkerScript | undefined;

function blockArrays(b: RowBlock): ArrayBufferView[] {
  return [b.feasible, b.mode, b.values, b.maxMotoringWheelNm, b.maxBrakingWheelNm, b.altCell, b.altMode, b.altValues];
}

/**
 * The body of the table `spec` asks for (in `spec.format`), solved, joined and rendered on the
 * threads of `pool`. `hash` is the table's content hash, carried into the body; `dtHash` the
 * drivetrain's, the workers' cache key of the rebuilt drivetrain.
 */
export async function tableBodyPooled(pool: TablePool, dt: Drivetrain, dtHash: string, spec: ResolvedTableSpec, hash: string): Promise<Buffer> {
  const blocks = await solveRowBlocks(pool, dt, spec, { drivetrainKey: dtHash });
  script ??= workerScript(import.meta.url, 'tableBodyWorker');
  const task: TableBodyTask = { name: dt.name, spec, blocks, hash, format: spec.format };
  const moved = move({ [transferableSymbol]: movableBuffers(blocks.flatMap(blockArrays)), [valueSymbol]: task } as Parameters<typeof move>[0]);
  const bytes = valueOf(await pool.runScript<unknown, TableBodyReply>(script, moved));
  return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
}
