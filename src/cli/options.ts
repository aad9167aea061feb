/** Options shared by several commands, and the parsers of their values. */
import { Option, type Command } from 'commander';
import { parseModeText } from '../solver/modes.js';
import { MODES, type Mode } from '../solver/types.js';
import { CliError, isFileRef, type SourceOptions } from './context.js';

/** `--maps`, `--data` and (for commands that can call a server) `--url`. */
export function addSourceOptions(cmd: Command, withUrl: boolean): Command {
  cmd
    .addOption(new Option('--maps <dir>', 'folder of shipped machine maps and drivetrains').default('./maps').env('MAPS_DIR'))
    .addOption(new Option('--data <dir>', 'folder of uploaded documents (machines/, drivetrains/)').default('./data').env('DATA_DIR'));
  if (withUrl) cmd.option('--url <url>', 'ask a running episplit server at this address instead of reading the folders');
  return cmd;
}

export function sourceOf(opts: { maps: string; data: string; url?: string }): SourceOptions {
  return opts.url === undefined ? { maps: opts.maps, data: opts.data } : { maps: opts.maps, data: opts.data, url: opts.url };
}

/** `--modes split,locked` → the listed modes, each checked against MODES. */
export function parseModes(text: string | undefined): Mode[] | undefined {
  return text === undefined ? undefined : parseModeText(text, '--modes');
}

export const MODES_HELP = `restrict the optimum to these modes, comma-separated (${MODES.join(', ')})`;

/** A stored drivetrain name for a server call; a file cannot be used there. */
export function nameForServer(ref: string, what: string): string {
  if (isFileRef(ref)) {
    throw new CliError('invalid-request', `--drivetrain ${ref}: ${what} with --url needs the name of a drivetrain stored on the server, not a file`, '--drivetrain');
  }
  return encodeURIComponent(ref);
}

/** `--out -` or no `--out` means standard output. */
export function toStdout(out: string | undefined): boolean {
  return out === undefined || out === '-';
}
