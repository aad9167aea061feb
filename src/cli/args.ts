/** Argument parsers for the command line; each failure is a usage error naming the option. */
import { CliError } from './context.js';

/** `from:to:steps` or a comma-separated ascending list. */
export function parseAxis(text: string, option: string): { from: number; to: number; steps: number } | number[] {
  const range = /^(-?[\d.eE+-]+):(-?[\d.eE+-]+):(\d+)$/.exec(text.trim());
  if (range) {
    const from = Number(range[1]);
    const to = Number(range[2]);
    const steps = Number(range[3]);
    if (!Number.isFinite(from) || !Number.isFinite(to) || !Number.isInteger(steps) || steps < 2 || !(to > from)) {
      throw new CliError('invalid-request', `${option} "${text}": expected from:to:steps with from < to and steps >= 2`, option);
    }
    return { from, to, steps };
  }
  const list = text.split(',').map((s) => Number(s.trim()));
  if (list.length < 1 || list.some((v) => !Number.isFinite(v))) {
    throw new CliError('invalid-request', `${option} "${text}": expected from:to:steps or a comma-separated list of numbers`, option);
  }
  for (let i = 1; i < list.length; i++) {
    if (!(list[i]! > list[i - 1]!)) throw new CliError('invalid-request', `${option}: the list must be strictly ascending`, option);
  }
  return list;
}

export function parseNumber(text: string, option: string): number {
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v)) throw new CliError('invalid-request', `${option} "${text}" is not a number`, option);
  return v;
}

export function parseShard(text: string): { index: number; count: number } {
  const m = /^(\d+)\/(\d+)$/.exec(text.trim());
  if (!m) throw new CliError('invalid-request', `--shard "${text}": expected i/n, e.g. 0/4`, '--shard');
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (count < 1 || index >= count) throw new CliError('invalid-request', `--shard ${text}: need 0 <= i < n`, '--shard');
  return { index, count };
}
