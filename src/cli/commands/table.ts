/**
 * `episplit table`: a lookup table over wheel speed × wheel torque, written as CSV, JSON or a C
 * header. Built in this process for small tables, on worker threads for large ones (or when
 * --threads is given); both give the same table. The content hash recorded in JSON and C output
 * covers the drivetrain, its machines and the request, as the HTTP service computes it.
 */
import { Option, type Command } from 'commander';
import type { LookupTable } from '../../solver/tableResult.js';
import type { Drivetrain } from '../../solver/drivetrain.js';
import type { TableFormat, TableSpec, TableSpecInput } from '../../solver/tableSpec.js';
import { parseAxisText as parseAxis } from '../../solver/tableSpec.js';
import { parseNumber } from '../args.js';
import { callServer, CliError, contentHash, openRegistry, resolveDrivetrain } from '../context.js';
import { addSourceOptions, MODES_HELP, nameForServer, parseModes, sourceOf } from '../options.js';
import { progressBar, writeOutput } from '../output.js';
import type { DrivetrainGridOptions } from './point.js';

/** Tables with more cells than this are built on worker threads. */
export const POOL_THRESHOLD_CELLS = 5000;

const FORMATS = ['json', 'csv', 'c'] as const satisfies readonly TableFormat[];

interface TableOptions extends DrivetrainGridOptions {
  format?: TableFormat;
  out?: string;
  margin?: string;
  modes?: string;
  strict?: boolean;
  threads?: string;
}

/** The format asked for, else the one the output file's extension names, else JSON. */
export function tableFormatFor(format: TableFormat | undefined, out: string | undefined): TableFormat {
  if (format) return format;
  const ext = out?.toLowerCase().match(/\.([a-z]+)$/)?.[1];
  if (ext === 'csv') return 'csv';
  if (ext === 'h' || ext === 'c') return 'c';
  return 'json';
}

/** The table request from the axis, mode and margin options (keys only when given, as a client would send them). */
export function tableSpecFromOptions(opts: { speed: string; torque: string; margin?: string; modes?: string; strict?: boolean }, format: TableFormat): TableSpecInput {
  const spec: TableSpecInput = { speedRpm: parseAxis(opts.speed, '--speed'), torqueNm: parseAxis(opts.torque, '--torque'), format };
  const modes = parseModes(opts.modes);
  if (modes) spec.modes = modes;
  if (opts.strict) spec.strict = true;
  if (opts.margin !== undefined) spec.modeSwitchMarginW = parseNumber(opts.margin, '--margin');
  return spec;
}

export async function renderTable(table: LookupTable, format: TableFormat): Promise<string> {
  if (format === 'csv') return (await import('../../report/tableCsv.js')).tableToCsv(table);
  if (format === 'c') return (await import('../../report/cHeader.js')).tableToCHeader(table);
  return JSON.stringify((await import('../../report/tableJson.js')).tableToJson(table));
}

/**
 * Builds a table in this process, or on worker threads when it is large or `threads` is given
 * (the same table either way), with a progress bar on a terminal.
 */
export async function buildTableWithProgress(dt: Drivetrain, spec: TableSpec, hash: string, threads: number | undefined): Promise<LookupTable> {
  const cells = tableCells(spec);
  const progress = progressBar('table', 'cells');
  try {
    const onProgress = (done: number, total: number) => progress.update(done, total);
    if (threads === undefined && cells <= POOL_THRESHOLD_CELLS) return (await import('../../solver/table.js')).buildTable(dt, spec, { hash, onProgress });
    const { buildTablePooled } = await import('../../solver/tablePool.js');
    return await buildTablePooled(dt, spec, { hash, onProgress, ...(threads !== undefined ? { threads } : {}) });
  } finally {
    progress.stop();
  }
}

function tableCells(spec: TableSpec): number {
  const n = (a: TableSpec['speedRpm']) => (Array.isArray(a) ? a.length : a.steps);
  return n(spec.speedRpm) * n(spec.torqueNm);
}

function parseThreads(text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const n = parseNumber(text, '--threads');
  if (!Number.isInteger(n) || n < 1 || n > 256) throw new CliError('invalid-request', `--threads ${text}: expected a whole number from 1 to 256`, '--threads');
  return n;
}

export function registerTable(program: Command): void {
  const cmd = program
    .command('table')
    .description('Build a lookup table of the optimal split over wheel speed × wheel torque (CSV, JSON or C header)')
    .requiredOption('--drivetrain <name|file>', 'stored drivetrain name, or a drivetrain JSON file (machines by name)')
    .requiredOption('--speed <axis>', 'wheel speed axis, rpm: from:to:steps (e.g. 0:1500:101) or an ascending list 0,100,200')
    .requiredOption('--torque <axis>', 'wheel torque axis, N·m (negative = braking): from:to:steps (e.g. -2000:3000:101) or a list')
    .addOption(new Option('--format <format>', 'output format (default: from the --out extension .csv/.h/.json, else json)').choices(FORMATS))
    .option('--out <file>', 'output file, written atomically; "-" or absent: standard output')
    .option('--margin <W>', 'mode-switch margin, W: a cell keeps its neighbours\' mode when that costs at most this much more battery power (default 0)')
    .option('--modes <list>', MODES_HELP)
    .option('--strict', 'braking beyond what machines and battery absorb is infeasible instead of friction-braked')
    .option('--threads <n>', `worker threads (default: worker threads only above ${POOL_THRESHOLD_CELLS} cells, one per core)`);
  addSourceOptions(cmd, true).action(async (opts: TableOptions) => {
    const format = tableFormatFor(opts.format, opts.out);
    const spec = tableSpecFromOptions(opts, format);
    const threads = parseThreads(opts.threads);
    if (opts.url !== undefined) {
      const res = await callServer(opts.url, 'POST', `/v1/drivetrains/${nameForServer(opts.drivetrain, 'table')}/tables`, spec, '*/*');
      await writeOutput(opts.out, await res.text());
      return;
    }
    const { resolveTableSpec } = await import('../../solver/tableSpec.js');
    const resolved = resolveTableSpec(spec);
    const registry = await openRegistry(sourceOf(opts));
    const { dt, hash: dtHash } = resolveDrivetrain(registry, opts.drivetrain);
    const table = await buildTableWithProgress(dt, resolved.spec, contentHash(dtHash, resolved.spec), threads);
    await writeOutput(opts.out, await renderTable(table, format));
  });
}
