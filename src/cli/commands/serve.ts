/** `episplit serve`: the HTTP service, configured from the options (which override the environment). */
import { Option, type Command } from 'commander';
import { parseNumber } from '../args.js';
import { CliError } from '../context.js';

interface ServeOptions {
  port?: string;
  host?: string;
  maps?: string;
  data?: string;
}

export function registerServe(program: Command): void {
  program
    .command('serve')
    .description('Start the HTTP service (stops on SIGINT/SIGTERM after in-flight requests finish)')
    .addOption(new Option('--port <n>', 'listening port (0: any free port)').env('PORT').default('8080'))
    .addOption(new Option('--host <host>', 'listening address').env('HOST').default('127.0.0.1'))
    .addOption(new Option('--maps <dir>', 'folder of shipped machine maps and drivetrains (read-only through the API)').env('MAPS_DIR').default('./maps'))
    .addOption(new Option('--data <dir>', 'folder where uploaded documents are stored').env('DATA_DIR').default('./data'))
    .action(async (opts: ServeOptions) => {
      const port = parseNumber(opts.port ?? '8080', '--port');
      if (!Number.isInteger(port) || port < 0 || port > 65535) throw new CliError('invalid-request', `--port ${opts.port}: expected a whole number 0..65535`, '--port');
      process.env.PORT = String(port);
      if (opts.host) process.env.HOST = opts.host;
      if (opts.maps) process.env.MAPS_DIR = opts.maps;
      if (opts.data) process.env.DATA_DIR = opts.data;
      // Loaded here so the other commands do not load the HTTP stack.
      const { startServer } = await import('../../server.js');
      try {
        await startServer();
      } catch (err) {
        const code = (err as NodeJS.ErrnoException).code;
        if (code === 'EADDRINUSE' || code === 'EACCES' || code === 'EADDRNOTAVAIL') {
          throw new CliError('invalid-request', `cannot listen on ${process.env.HOST}:${port}: ${(err as Error).message}`, '--port');
        }
        throw err;
      }
    });
}
