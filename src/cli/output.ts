/**
 * Where results go: standard output, or a file written atomically (temporary file, fsync,
 * rename), so a failed or interrupted command never leaves a half-written file behind. Results
 * are complete in memory before anything is written.
 */
import { Presets, SingleBar } from 'cli-progress';
import { writeFileAtomic } from '../store/files.js';
import { CliError } from './context.js';
import { toStdout } from './options.js';

export async function writeStdout(content: string): Promise<void> {
  if (content === '') return;
  await new Promise<void>((resolve, reject) => {
    process.stdout.write(content, (err) => (err ? reject(err) : resolve()));
  });
}

/** Writes `content` to `out` (atomically) or to standard output when `out` is absent or `-`. */
export async function writeOutput(out: string | undefined, content: string, option = '--out'): Promise<void> {
  if (toStdout(out)) return writeStdout(content);
  try {
    await writeFileAtomic(out!, content);
  } catch (err) {
    throw new CliError('invalid-request', `cannot write ${option} ${out}: ${(err as Error).message}`, option);
  }
}

export interface Progress {
  update(done: number, total: number): void;
  stop(): void;
}

const SILENT: Progress = { update() {}, stop() {} };

/** A progress bar on standard error when it is a terminal; nothing at all when it is not. */
export function progressBar(label: string, unit: string): Progress {
  if (!process.stderr.isTTY) return SILENT;
  const bar = new SingleBar(
    {
      stream: process.stderr,
      format: `${label} [{bar}] {percentage}% | {value}/{total} ${unit} | {eta_formatted} left`,
      hideCursor: true,
      clearOnComplete: true,
      etaBuffer: 50,
    },
    Presets.shades_classic,
  );
  let started = false;
  return {
    update(done, total) {
      if (!started) {
        bar.start(total, 0);
        started = true;
      }
      bar.update(done);
    },
    stop() {
      if (started) bar.stop();
      started = false;
    },
  };
}
