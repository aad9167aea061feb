/**
 * `episplit cycle`: battery energy of a drivetrain over a drive cycle for a vehicle, optionally
 * with the layout comparison and the cycle-optimal bound for costs per mode switch. Prints
 * `{ result, comparison?, bounds? }` as JSON (the HTTP service's answer) or a short summary.
 */
import { existsSync, readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { Option, type Command } from 'commander';
import type { Mode } from '../../solver/types.js';
import { BUILTIN_CYCLE_IDS, getBuiltinCycle, type BuiltinCycleId } from '../../vehicle/cycles.js';
import type { Cycle } from '../../vehicle/schema.js';
import { parseNumber } from '../args.js';
import { callServer, CliError, openRegistry, readJsonFile, resolveDrivetrain } from '../context.js';
import { cycleSummary, type CycleAnswer } from '../cycleSummary.js';
import { addSourceOptions, MODES_HELP, nameForServer, parseModes, sourceOf } from '../options.js';
import { writeOutput } from '../output.js';

interface CycleOptions {
  maps: string;
  data: string;
  url?: string;
  drivetrain: string;
  vehicle: string;
  cycle: string;
  compare?: boolean;
  switchCost?: string;
  usableWh?: string;
  series?: boolean;
  modes?: string;
  out?: string;
  format: 'json' | 'summary';
  svg?: string;
}

/** The --cycle option read: a built-in id, or a CSV file's text, or a JSON file's value. */
interface CycleSource {
  builtin?: BuiltinCycleId;
  file?: string;
  text?: string;
  json?: unknown;
}

function cycleSource(ref: string): CycleSource {
  if ((BUILTIN_CYCLE_IDS as readonly string[]).includes(ref)) return { builtin: ref as BuiltinCycleId };
  const isCsv = ref.toLowerCase().endsWith('.csv');
  if (!isCsv && !ref.toLowerCase().endsWith('.json') && !ref.includes('/') && !existsSync(ref)) {
    throw new CliError('invalid-request', `--cycle "${ref}": not a built-in cycle (${BUILTIN_CYCLE_IDS.join(', ')}) nor a .json or .csv file`, '--cycle');
  }
  if (!existsSync(ref)) throw new CliError('not-found', `no cycle file ${ref}`, '--cycle');
  if (isCsv) return { file: ref, text: readFileSync(ref, 'utf8') };
  return { file: ref, json: readJsonFile(ref, 'cycle') };
}

function cycleName(file: string): string {
  return basename(file).replace(/\.(csv|json)$/i, '');
}

async function resolveCycleSource(src: CycleSource): Promise<Cycle> {
  if (src.builtin) return getBuiltinCycle(src.builtin);
  const { parseCycleCsv, parseCycleInput } = await import('../../vehicle/schema.js');
  if (src.text !== undefined) return parseCycleCsv(src.text, cycleName(src.file!), 'cycle');
  return parseCycleInput(src.json, 'cycle');
}

function cycleBody(src: CycleSource): unknown {
  if (src.builtin) return { builtin: src.builtin };
  if (src.text !== undefined) return { csv: src.text, name: cycleName(src.file!) };
  return src.json;
}

function parseCosts(text: string | undefined): number[] | undefined {
  if (text === undefined) return undefined;
  const costs = text.split(',').map((s) => parseNumber(s, '--switch-cost'));
  for (const c of costs) if (c < 0) throw new CliError('invalid-request', `--switch-cost ${text}: costs must be >= 0 Wh`, '--switch-cost');
  if (costs.length > 8) throw new CliError('invalid-request', '--switch-cost: at most 8 costs', '--switch-cost');
  return costs;
}

export function registerCycle(program: Command): void {
  const cmd = program
    .command('cycle')
    .description('Battery energy over a drive cycle (Wh, Wh/km, losses, modes, regeneration, unfollowed steps)')
    .requiredOption('--drivetrain <name|file>', 'stored drivetrain name, or a drivetrain JSON file (machines by name)')
    .requiredOption('--vehicle <file.json>', 'vehicle JSON: massKg, rollingResistance, dragAreaM2 (m²), optional wheelRadiusM (m), auxiliaryW (W), regen')
    .requiredOption('--cycle <id|file>', `built-in cycle (${BUILTIN_CYCLE_IDS.join(', ')}), or a file: .json {timeS, speedKph, gradePct?} or .csv with columns timeS,speedKph[,gradePct] (s, km/h, %)`)
    .option('--compare', 'also run the cycle on restricted layouts (each machine alone, split only, full) and give savings in %')
    .option('--switch-cost <Wh>', 'cycle-optimal bound over mode sequences with this cost per mode switch, Wh (comma-separated: one bound each)')
    .option('--usable-wh <Wh>', 'usable battery energy, Wh: adds the range on repeats of the cycle, km')
    .option('--series', 'include the per-step series in the JSON')
    .option('--modes <list>', MODES_HELP)
    .addOption(new Option('--format <format>', 'json: the full answer; summary: a short table').choices(['json', 'summary']).default('json'))
    .option('--out <file>', 'output file, written atomically; "-" or absent: standard output')
    .option('--svg <file.svg>', 'also write a plot of speed, mode and battery power over time');
  addSourceOptions(cmd, true).action(async (opts: CycleOptions) => {
    if (opts.svg === '-') throw new CliError('invalid-request', '--svg needs a file name (standard output carries the result)', '--svg');
    const switchCostsWh = parseCosts(opts.switchCost);
    const usableBatteryWh = opts.usableWh === undefined ? undefined : parseNumber(opts.usableWh, '--usable-wh');
    if (usableBatteryWh !== undefined && !(usableBatteryWh > 0)) throw new CliError('invalid-request', '--usable-wh must be positive', '--usable-wh');
    const modes = parseModes(opts.modes);
    const vehicleDoc = readJsonFile(opts.vehicle, 'vehicle');
    const src = cycleSource(opts.cycle);
    const wantSeries = opts.series === true || opts.svg !== undefined;
    let answer: CycleAnswer;
    if (opts.url !== undefined) {
      const body = {
        vehicle: vehicleDoc,
        cycle: cycleBody(src),
        compare: opts.compare === true,
        series: wantSeries,
        ...(switchCostsWh ? { switchCostsWh } : {}),
        ...(usableBatteryWh !== undefined ? { usableBatteryWh } : {}),
        ...(modes ? { modes } : {}),
      };
      answer = (await (await callServer(opts.url, 'POST', `/v1/drivetrains/${nameForServer(opts.drivetrain, 'cycle')}/cycles`, body)).json()) as CycleAnswer;
    } else {
      const { parseVehicle } = await import('../../vehicle/schema.js');
      const { runCycleJob } = await import('../../vehicle/cycleJob.js');
      const vehicle = parseVehicle(vehicleDoc, 'vehicle');
      const cycle = await resolveCycleSource(src);
      const registry = await openRegistry(sourceOf(opts));
      const { dt } = resolveDrivetrain(registry, opts.drivetrain);
      // The service's own job: one run serves the result, the bounds and the full layout.
      answer = runCycleJob(dt, vehicle, cycle, {
        compare: opts.compare === true,
        series: wantSeries,
        ...(modes ? { modes: modes as Mode[] } : {}),
        ...(switchCostsWh ? { switchCostsWh } : {}),
        ...(usableBatteryWh !== undefined ? { usableBatteryWh } : {}),
      });
    }
    let svg: string | undefined;
    if (opts.svg !== undefined) {
      const { plotCycle } = await import('../../report/svg/plotCycle.js');
      svg = plotCycle(answer.result, { title: `${answer.result.drivetrain}: ${answer.result.cycle}` });
    }
    if (!opts.series) delete answer.result.series;
    const text = opts.format === 'summary' ? cycleSummary(answer) : JSON.stringify(answer, null, 2) + '\n';
    if (svg !== undefined) await writeOutput(opts.svg, svg, '--svg');
    await writeOutput(opts.out, text);
  });
}
