/** Entry point of the `gainline` command (bundled to dist/cli.js). */
import { runCli } from './commands';
import { processIO } from './io';

// Output piped into `head` closes early; that is not a failure worth a stack trace.
process.stdout.on('error', (e: NodeJS.ErrnoException) => {
  if (e.code === 'EPIPE') process.exit(0);
  throw e;
});

runCli(process.argv.slice(2), processIO()).then(
  (code) => {
    process.exitCode = code;
  },
  (e: unknown) => {
    process.stderr.write(`gainline: unexpected failure: ${e instanceof Error ? e.message : String(e)}\n`);
    process.exitCode = 1;
  },
);
