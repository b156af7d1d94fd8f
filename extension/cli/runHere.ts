/**
 * The commands, bundled apart from the launcher (main.ts, dist/cli.js) as dist/cliCommands.js: loaded only
 * by the process that runs a command, never by one that only runs itself again for large pages.
 */
import { runCli } from './commands';
import { processIO } from './io';

/** Runs the command line `argv` against this process's standard streams; resolves to the exit code. */
export function runCommandLine(argv: string[]): Promise<number> {
  return runCli(argv, processIO());
}
