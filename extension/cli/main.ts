/** Entry point of the `gainline` command (bundled to dist/cli.js). */
import { largePagesEnv, runWithLargePages } from './largePages';

// Output piped into `head` closes early; that is not a failure worth a stack trace.
process.stdout.on('error', (e: NodeJS.ErrnoException) => {
  if (e.code === 'EPIPE') process.exit(0);
  throw e;
});

/** The commands are loaded only in the process that runs them (not in one that re-runs itself for large pages). */
async function runHere(): Promise<number> {
  const [{ runCli }, { processIO }] = await Promise.all([import('./commands'), import('./io')]);
  return runCli(process.argv.slice(2), processIO());
}

const rerun = largePagesEnv(process.argv.slice(2), process.env, process.cwd());
// If the re-run cannot start (no spawn allowed), the command runs here without large pages.
(rerun ? runWithLargePages(rerun).catch(runHere) : runHere()).then(
  (code) => {
    process.exitCode = code;
  },
  (e: unknown) => {
    process.stderr.write(`gainline: unexpected failure: ${e instanceof Error ? e.message : String(e)}\n`);
    process.exitCode = 1;
  },
);
