/** Entry of the `episplit` command line (run with tsx, or compiled as dist/cli/main.js). */
import { runCli } from './program.js';

process.exitCode = await runCli(process.argv);
