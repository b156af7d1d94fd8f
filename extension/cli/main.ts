/**
 * Entry point of the `gainline` command (bundled to dist/cli.js): a launcher holding no more than the
 * large-pages decision, so a process that only runs itself again (largePages.ts) loads 3 KB of script,
 * not the 1.2 MB of the commands: `--version` re-run took 0.32 s with one bundle and 0.27 s with two,
 * against 0.17 s run here, Node's bare start being 0.10 s. The commands are their own bundle,
 * dist/cliCommands.js (runHere.ts), next to this one.
 */
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { largePagesEnv, runWithLargePages } from './largePages';
import type { runCommandLine } from './runHere';

// Output piped into `head` closes early; that is not a failure worth a stack trace.
process.stdout.on('error', (e: NodeJS.ErrnoException) => {
  if (e.code === 'EPIPE') process.exit(0);
  throw e;
});

/** The commands are loaded only in the process that runs them (not in one that re-runs itself for large pages). */
async function runHere(): Promise<number> {
  // Loaded by a path at run time (Node's createRequire), so esbuild leaves the commands out of this bundle.
  const commands = createRequire(__filename)(join(__dirname, 'cliCommands.js')) as { runCommandLine: typeof runCommandLine };
  return commands.runCommandLine(process.argv.slice(2));
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
