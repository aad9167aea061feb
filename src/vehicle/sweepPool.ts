/**
 * Sweeps on a worker-thread pool (piscina): one task per design, so a sweep uses every core of
 * one machine (shards spread it over machines). Rows equal {@link runSweep}'s.
 */
import { randomUUID } from 'node:crypto';
import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import type { MachineMap } from '../machine/map.js';
import { ModelError } from '../problem.js';
import { workerScript } from '../solver/workerScript.js';
import { rankSweepRows, resolveSweepCycles, type SweepRow } from './sweep.js';
import type { SweepDesign, SweepSpec } from './sweepSpec.js';
import type { DesignTask } from './sweepWorker.js';

export async function runSweepPooled(
  spec: SweepSpec,
  designs: readonly SweepDesign[],
  getMachine: (name: string) => MachineMap | undefined,
  opts: { threads?: number; onProgress?: (done: number, total: number) => void } = {},
): Promise<SweepRow[]> {
  resolveSweepCycles(spec); // refuse bad cycles here, before any worker starts
  const machines: MachineMap[] = [];
  for (const [field, name] of [['sunMachine', spec.drivetrain.sunMachine], ['ringMachine', spec.drivetrain.ringMachine]] as const) {
    const m = getMachine(name);
    if (!m) throw new ModelError('unknown-machine', `no machine named "${name}"`, `sweep.drivetrain.${field}`);
    machines.push(m);
  }
  const script = workerScript(import.meta.url, 'sweepWorker');
  const threads = Math.max(1, Math.floor(opts.threads ?? availableParallelism()));
  const pool = new Piscina<DesignTask, SweepRow>({ filename: script.filename, execArgv: script.execArgv, minThreads: 0, maxThreads: threads });
  try {
    const key = randomUUID();
    let done = 0;
    const rows = await Promise.all(
      designs.map((design) =>
        pool.run({ key, spec, design, machines }).then((row) => {
          opts.onProgress?.(++done, designs.length);
          return row;
        }),
      ),
    );
    return rankSweepRows(rows);
  } finally {
    await pool.destroy();
  }
}
