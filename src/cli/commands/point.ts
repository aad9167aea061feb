/** `episplit point`: the battery-optimal setting at one wheel operating point, as JSON. */
import type { Command } from 'commander';
import type { PointResult, SolveOptions } from '../../solver/types.js';
import { parseNumber } from '../args.js';
import { callServer, isFileRef, openRegistry, readJsonFile, resolveDrivetrain } from '../context.js';
import { addSourceOptions, MODES_HELP, parseModes, sourceOf } from '../options.js';
import { writeStdout } from '../output.js';

/** Options every drivetrain-at-a-point-or-grid command shares. */
export interface DrivetrainGridOptions {
  maps: string;
  data: string;
  url?: string;
  drivetrain: string;
  speed: string;
  torque: string;
}

interface PointOptions extends DrivetrainGridOptions {
  modes?: string;
  strict?: boolean;
}

export function registerPoint(program: Command): void {
  const cmd = program
    .command('point')
    .description('Battery-optimal split at one wheel operating point; prints the answer as JSON (rpm, N·m, W)')
    .requiredOption('--drivetrain <name|file>', 'stored drivetrain name, or a drivetrain JSON file (machines by name)')
    .requiredOption('--speed <rpm>', 'wheel speed, rpm (negative: reversing)')
    .requiredOption('--torque <Nm>', 'wheel torque, N·m (negative: braking when moving forward)')
    .option('--modes <list>', MODES_HELP)
    .option('--strict', 'braking beyond what machines and battery absorb is infeasible instead of friction-braked');
  addSourceOptions(cmd, true).action(async (opts: PointOptions) => {
    const wheelSpeedRpm = parseNumber(opts.speed, '--speed');
    const wheelTorqueNm = parseNumber(opts.torque, '--torque');
    const modes = parseModes(opts.modes);
    const strict = opts.strict === true;
    let result: PointResult;
    if (opts.url !== undefined) {
      const body = { points: [{ wheelSpeedRpm, wheelTorqueNm }], ...(modes ? { modes } : {}), strict };
      const res = isFileRef(opts.drivetrain)
        ? await callServer(opts.url, 'POST', '/v1/operating-points', { drivetrain: readJsonFile(opts.drivetrain, 'drivetrain'), ...body })
        : await callServer(opts.url, 'POST', `/v1/drivetrains/${encodeURIComponent(opts.drivetrain)}/operating-points`, body);
      result = ((await res.json()) as { results: PointResult[] }).results[0]!;
    } else {
      const { solvePoint } = await import('../../solver/point.js');
      const registry = await openRegistry(sourceOf(opts));
      const { dt } = resolveDrivetrain(registry, opts.drivetrain);
      const solve: SolveOptions = modes ? { modes, strict } : { strict };
      result = solvePoint(dt, wheelSpeedRpm, wheelTorqueNm, solve);
    }
    await writeStdout(JSON.stringify(result, null, 2) + '\n');
  });
}
