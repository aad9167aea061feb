/**
 * Worker-thread entry for sweep designs (run by piscina from sweepPool.ts). Each task carries the
 * sweep specification, one design and the base machines' canonical maps (plain data).
 */
import type { MachineMap } from '../machine/map.js';
import { resolveSweepCycles, runSweepDesign, type SweepRow } from './sweep.js';
import type { SweepDesign, SweepSpec } from './sweepSpec.js';
import type { Cycle } from './schema.js';

export interface DesignTask {
  /** Identifies the sweep so its cycles are validated once per worker. */
  key: string;
  spec: SweepSpec;
  design: SweepDesign;
  machines: MachineMap[];
}

let cached: { key: string; cycles: Cycle[] } | undefined;

export default function runDesignTask(task: DesignTask): SweepRow {
  if (!cached || cached.key !== task.key) cached = { key: task.key, cycles: resolveSweepCycles(task.spec) };
  const maps = new Map(task.machines.map((m) => [m.name, m]));
  return runSweepDesign(task.spec, cached.cycles, task.design, (n) => maps.get(n));
}
