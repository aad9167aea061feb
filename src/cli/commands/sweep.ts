/**
 * `episplit sweep`: runs a design sweep (all designs, or shard i of n) and writes its rows as CSV;
 * `episplit merge`: joins shard outputs into the CSV an unsharded run writes, byte for byte.
 */
import { readFileSync, existsSync } from 'node:fs';
import type { Command } from 'commander';
import { ModelError } from '../../problem.js';
import { parseNumber, parseShard } from '../args.js';
import { CliError, openRegistry, readJsonFile } from '../context.js';
import { addSourceOptions, sourceOf } from '../options.js';
import { progressBar, writeOutput } from '../output.js';

interface SweepOptions {
  maps: string;
  data: string;
  spec: string;
  out?: string;
  shard?: string;
  threads?: string;
}

interface MergeOptions {
  out?: string;
}

export function registerSweep(program: Command): void {
  const cmd = program
    .command('sweep')
    .description('Run a design sweep (gear set, final drive, machine torque scales) over drive cycles; writes one CSV row per design')
    .requiredOption('--spec <file.json>', 'sweep specification JSON: drivetrain, vehicle, cycles, axes to try, constraints')
    .option('--out <file.csv>', 'output CSV, written atomically; "-" or absent: standard output')
    .option('--shard <i/n>', 'run only shard i of n (designs whose index mod n is i), 0 <= i < n; join the outputs with "merge"')
    .option('--threads <n>', 'worker threads; above 1 the designs run on a worker pool (default 1: in this process)');
  addSourceOptions(cmd, false).action(async (opts: SweepOptions) => {
    const shard = opts.shard === undefined ? undefined : parseShard(opts.shard);
    const threads = opts.threads === undefined ? 1 : parseNumber(opts.threads, '--threads');
    if (!Number.isInteger(threads) || threads < 1 || threads > 64) {
      throw new CliError('invalid-request', `--threads ${opts.threads}: a whole number from 1 to 64`, '--threads');
    }
    const { expandSweep, parseSweepSpec, runSweep, shardDesigns, sweepRowsToCsv } = await import('../../vehicle/sweep.js');
    const spec = parseSweepSpec(readJsonFile(opts.spec, 'sweep specification'));
    const all = expandSweep(spec);
    const designs = shard ? shardDesigns(all, shard.index, shard.count) : all;
    const registry = await openRegistry(sourceOf(opts));
    const progress = progressBar('sweep', 'designs');
    let csv: string;
    try {
      const getMachine = (name: string) => registry.getMachine(name)?.map;
      const onProgress = (done: number, total: number) => progress.update(done, total);
      const rows =
        threads > 1
          ? await (await import('../../vehicle/sweepPool.js')).runSweepPooled(spec, designs, getMachine, { threads, onProgress })
          : runSweep(spec, designs, getMachine, onProgress);
      csv = sweepRowsToCsv(rows);
    } finally {
      progress.stop();
    }
    await writeOutput(opts.out, csv);
  });
}

export function registerMerge(program: Command): void {
  program
    .command('merge')
    .description('Join the CSV outputs of "sweep --shard i/n" (all n shards) into the CSV of the unsharded sweep, ranked again')
    .argument('<shards...>', 'shard CSV files, in any order')
    .option('--out <file.csv>', 'output CSV, written atomically; "-" or absent: standard output')
    .action(async (files: string[], opts: MergeOptions) => {
      const { mergeSweepRows, sweepRowsToCsv } = await import('../../vehicle/sweep.js');
      const { parseSweepCsv } = await import('../../vehicle/sweepCsv.js');
      const lists = files.map((file) => {
        if (!existsSync(file)) throw new CliError('not-found', `no shard file ${file}`, file);
        try {
          return parseSweepCsv(readFileSync(file, 'utf8'));
        } catch (err) {
          if (err instanceof ModelError) throw new CliError(err.code, `${file}: ${err.message}`, err.path);
          throw err;
        }
      });
      const rows = mergeSweepRows(lists);
      // The unsharded run numbers designs 0..N-1; a gap means a shard output is missing.
      const missing = rows.map((r, i) => (r.index === i ? -1 : i)).filter((i) => i >= 0);
      if (missing.length > 0) {
        throw new CliError('sweep-invalid', `the shards do not hold every design: design ${missing[0]} (and perhaps others) is missing; give the outputs of all n shards`, 'shards');
      }
      const names = lists.map((rs) => rs.find((r) => r.cycles.length > 0)?.cycles.map((c) => c.cycle).join('\n')).filter((n) => n !== undefined);
      if (new Set(names).size > 1) throw new CliError('sweep-invalid', 'the shards were run with different cycles; they come from different sweeps', 'shards');
      await writeOutput(opts.out, sweepRowsToCsv(rows));
    });
}
