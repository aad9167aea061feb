/** Argument parsers for the command line; each failure is a usage error naming the option. */
import { CliError } from './context.js';

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
