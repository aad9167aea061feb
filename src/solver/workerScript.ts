/**
 * Where a worker-thread script is and what the threads need to load it: `<name>.js` next to the
 * calling module when compiled, else `<name>.ts` loaded through tsx's loader (`--import <tsx>`).
 */
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { fileURLToPath, pathToFileURL } from 'node:url';

export interface WorkerScript {
  /** File URL of the script. */
  filename: string;
  /** Node options each worker thread needs to load it. */
  execArgv: string[];
}

export function workerScript(moduleUrl: string, name: string): WorkerScript {
  const js = new URL(`./${name}.js`, moduleUrl);
  if (existsSync(fileURLToPath(js))) return { filename: js.href, execArgv: [] };
  const ts = new URL(`./${name}.ts`, moduleUrl);
  if (!existsSync(fileURLToPath(ts))) throw new Error(`worker script ${name} not found next to ${fileURLToPath(moduleUrl)}`);
  const tsx = pathToFileURL(createRequire(moduleUrl).resolve('tsx')).href;
  return { filename: ts.href, execArgv: ['--import', tsx] };
}
