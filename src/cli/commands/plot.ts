/**
 * `episplit plot`: SVG of a drivetrain's optimal-split table (system efficiency, mode regions,
 * envelope) or of one machine map (efficiency contours and envelope). Axes default as in the
 * HTTP service: wheel speed 0 to the top wheel speed, torque ± the standstill limit, 81 steps.
 */
import type { Command } from 'commander';
import type { TableSpecInput } from '../../solver/tableSpec.js';
import { parseAxisText as parseAxis } from '../../solver/tableSpec.js';
import { parseNumber } from '../args.js';
import { callServer, CliError, contentHash, notLoaded, openRegistry, resolveDrivetrain } from '../context.js';
import { addSourceOptions, MODES_HELP, nameForServer, parseModes, sourceOf } from '../options.js';
import { writeOutput } from '../output.js';
import { buildTableWithProgress } from './table.js';

/** Largest plotted table, cells (as the service allows). */
const MAX_PLOT_CELLS = 201 * 201;
const DEFAULT_STEPS = 81;

interface PlotOptions {
  maps: string;
  data: string;
  url?: string;
  drivetrain?: string;
  machine?: string;
  speed?: string;
  torque?: string;
  margin?: string;
  modes?: string;
  out?: string;
}

async function machinePlot(opts: PlotOptions, name: string): Promise<string> {
  if (opts.url !== undefined) return (await callServer(opts.url, 'GET', `/v1/machines/${encodeURIComponent(name)}/plot.svg`, undefined, 'image/svg+xml')).text();
  const registry = await openRegistry(sourceOf(opts));
  const e = registry.getMachine(name);
  if (!e) throw notLoaded(registry, 'machine', name);
  const { plotMachine } = await import('../../report/svg/plotMachine.js');
  return plotMachine(e.map, { title: `${e.name}: efficiency map` });
}

async function tablePlot(opts: PlotOptions, ref: string): Promise<string> {
  const modes = parseModes(opts.modes);
  const margin = opts.margin === undefined ? 0 : parseNumber(opts.margin, '--margin');
  const speedAxis = opts.speed === undefined ? undefined : parseAxis(opts.speed, '--speed');
  const torqueAxis = opts.torque === undefined ? undefined : parseAxis(opts.torque, '--torque');
  if (opts.url !== undefined) {
    const q = new URLSearchParams();
    if (opts.speed !== undefined) q.set('speedRpm', opts.speed);
    if (opts.torque !== undefined) q.set('torqueNm', opts.torque);
    if (modes) q.set('modes', modes.join(','));
    if (opts.margin !== undefined) q.set('modeSwitchMarginW', String(margin));
    const qs = q.toString();
    const route = `/v1/drivetrains/${nameForServer(ref, 'plot')}/plot.svg${qs ? `?${qs}` : ''}`;
    return (await callServer(opts.url, 'GET', route, undefined, 'image/svg+xml')).text();
  }
  const registry = await openRegistry(sourceOf(opts));
  const { dt, hash: dtHash } = resolveDrivetrain(registry, ref);
  const { describeDrivetrain } = await import('../../solver/drivetrain.js');
  const { resolveTableSpec } = await import('../../solver/tableSpec.js');
  const { plotTable } = await import('../../report/svg/plotTable.js');
  const facts = describeDrivetrain(dt);
  const tmax = Math.ceil(Math.max(facts.standstillMaxWheelNm, 1));
  const input: TableSpecInput = {
    speedRpm: speedAxis ?? { from: 0, to: Math.floor(facts.maxWheelSpeedRpm), steps: DEFAULT_STEPS },
    torqueNm: torqueAxis ?? { from: -tmax, to: tmax, steps: DEFAULT_STEPS },
    ...(modes ? { modes } : {}),
    modeSwitchMarginW: margin,
  };
  const spec = resolveTableSpec(input, MAX_PLOT_CELLS);
  const table = await buildTableWithProgress(dt, spec.spec, contentHash(dtHash, spec.spec, 'svg'), undefined);
  return plotTable(table, { title: `${dt.name}: optimal split` });
}

export function registerPlot(program: Command): void {
  const cmd = program
    .command('plot')
    .description('SVG plot: a drivetrain\'s optimal-split table (--drivetrain) or a machine\'s efficiency map (--machine)')
    .option('--drivetrain <name|file>', 'plot the table of this drivetrain (stored name or JSON file)')
    .option('--machine <name>', 'plot this machine map instead')
    .option('--speed <axis>', `wheel speed axis, rpm: from:to:steps or a list (default 0 to the top wheel speed, ${DEFAULT_STEPS} steps)`)
    .option('--torque <axis>', `wheel torque axis, N·m: from:to:steps or a list (default ± the standstill limit, ${DEFAULT_STEPS} steps)`)
    .option('--margin <W>', 'mode-switch margin, W (default 0)')
    .option('--modes <list>', MODES_HELP)
    .option('--out <file.svg>', 'output SVG file, written atomically; "-" or absent: standard output');
  addSourceOptions(cmd, true).action(async (opts: PlotOptions) => {
    if ((opts.drivetrain === undefined) === (opts.machine === undefined)) {
      throw new CliError('invalid-request', 'give exactly one of --drivetrain (table plot) or --machine (machine map plot)', '--drivetrain');
    }
    let svg: string;
    if (opts.machine !== undefined) {
      for (const o of ['speed', 'torque', 'margin', 'modes'] as const) {
        if (opts[o] !== undefined) throw new CliError('invalid-request', `--${o} applies to table plots (--drivetrain), not to --machine`, `--${o}`);
      }
      svg = await machinePlot(opts, opts.machine);
    } else {
      svg = await tablePlot(opts, opts.drivetrain!);
    }
    await writeOutput(opts.out, svg);
  });
}
