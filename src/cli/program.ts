/**
 * The `episplit` command line: one command per file under commands/. Every failure prints the
 * API's error body `{"error":{"code","message","path"?}}` on standard error and exits with the
 * code of its class; results alone go to standard output (or the --out file).
 *
 * Exit codes (src/cli/exitCodes.ts; the error code on stderr is the API's):
 *   0  success
 *   1  internal      our own fault (HTTP 5xx class)
 *   2  usage         bad arguments or request: invalid-request, invalid-json, invalid-name, … (HTTP 400/401/415)
 *   3  not found     unknown drivetrain, machine or file: not-found (HTTP 404)
 *   4  invalid       input refused by the model: table-invalid, drivetrain-invalid, cycle-invalid,
 *                    vehicle-invalid, sweep-invalid, map-invalid, … (HTTP 409/422)
 *   5  too large     too-large (HTTP 413)
 *   6  unavailable   --url server unreachable or busy: overloaded, too-many-jobs, request-timeout (HTTP 429/503)
 */
import { readFileSync } from 'node:fs';
import { Command, CommanderError } from 'commander';
import { CliError, reportError } from './context.js';
import { EXIT } from './exitCodes.js';
import { registerCycle } from './commands/cycle.js';
import { registerMachines } from './commands/machines.js';
import { registerPlot } from './commands/plot.js';
import { registerPoint } from './commands/point.js';
import { registerServe } from './commands/serve.js';
import { registerMerge, registerSweep } from './commands/sweep.js';
import { registerTable } from './commands/table.js';

/** The package version (package.json sits two folders up from both src/cli and dist/cli). */
function packageVersion(): string {
  try {
    return (JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version?: string }).version ?? 'unknown';
  } catch {
    return 'unknown';
  }
}

const EXIT_HELP = `
Exit codes:
  0  success
  1  internal error
  2  bad arguments or request (invalid-request, invalid-json, …)
  3  unknown drivetrain, machine or file (not-found)
  4  input refused by the model (table-invalid, drivetrain-invalid, cycle-invalid, …)
  5  request too large (too-large)
  6  server unreachable or busy (--url)
Errors are printed on standard error as {"error":{"code","message","path"?}}.`;

export function buildProgram(): Command {
  const program = new Command('episplit');
  program
    .description('Optimal torque split between the sun and ring machines of a planetary electric axle: operating points, lookup tables, plots, drive cycles, design sweeps. Units: rpm, N·m, W, Wh, km/h.')
    .version(packageVersion(), '-V, --version')
    .exitOverride()
    .configureOutput({ outputError: () => {} })
    .showSuggestionAfterError(true)
    .addHelpText('after', EXIT_HELP);
  registerServe(program);
  registerMachines(program);
  registerPoint(program);
  registerTable(program);
  registerPlot(program);
  registerCycle(program);
  registerSweep(program);
  registerMerge(program);
  return program;
}

/** Runs the command line on `argv` (as process.argv: node, script, arguments); returns the exit code. */
export async function runCli(argv: readonly string[]): Promise<number> {
  const program = buildProgram();
  try {
    await program.parseAsync([...argv]);
    return EXIT.ok;
  } catch (err) {
    if (err instanceof CommanderError) {
      if (err.exitCode === 0) return EXIT.ok; // --help, --version
      const message = err.code === 'commander.help' || err.code === 'commander.executeSubCommandAsync'
        ? 'a command is required (see episplit --help)'
        : `${err.message.replace(/^error: /, '')} (see --help)`;
      return reportError(new CliError('invalid-request', message));
    }
    return reportError(err);
  }
}
