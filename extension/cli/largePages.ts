/**
 * Large pages for big inputs. A large read fills a gigabyte of fresh memory (the row columns, the
 * item bytes), and with 4 KB pages the kernel takes one page fault per 4 KB of it: measured on the
 * 10M-row TSV (632 MB), 239,000 minor faults and 5.3 s of user time; with glibc's malloc asking for
 * transparent huge pages (the tunable below, glibc 2.35 or later; Node's large ArrayBuffers come from
 * malloc) 52,000 faults and 3.7 s. A tunable is read when the process starts, so the command line
 * runs itself again once, with the tunable set, when an input file is at least LARGE_INPUT_BYTES.
 * Standard input, output and error are handed over as they are and the exit code comes back.
 *
 * GAINLINE_LARGE_PAGES=0 never re-runs; =1 re-runs whatever the size (for tests); unset: by size.
 * The marker variable says a process is the re-run one, so it never runs itself again.
 */
import { spawn } from 'node:child_process';
import { statSync } from 'node:fs';
import { resolve } from 'node:path';

export const LARGE_PAGES_VARIABLE = 'GAINLINE_LARGE_PAGES';
/** Set in the re-run process (value: the tunable it was given). */
export const LARGE_PAGES_MARKER = 'GAINLINE_LARGE_PAGES_RUN';
const TUNABLE = 'glibc.malloc.hugetlb=1';
/** Below this the re-run's start (about 0.1 s) costs more than the faults it saves. */
export const LARGE_INPUT_BYTES = 128 << 20;

type Env = Readonly<Record<string, string | undefined>>;

/**
 * The environment to run again with, or undefined to run here: on Linux only, not when already re-run,
 * not when switched off or when GLIBC_TUNABLES already says something about hugetlb.
 */
export function largePagesEnv(argv: readonly string[], env: Env, cwd: string, platform: string = process.platform,
  sizeOf: (path: string) => number = fileSize): Record<string, string> | undefined {
  const setting = env[LARGE_PAGES_VARIABLE];
  if (platform !== 'linux' || env[LARGE_PAGES_MARKER] !== undefined || setting === '0') return undefined;
  const tunables = env.GLIBC_TUNABLES ?? '';
  if (tunables.includes('glibc.malloc.hugetlb')) return undefined;
  if (setting !== '1' && !argv.some((arg) => !arg.startsWith('-') && sizeOf(resolve(cwd, arg)) >= LARGE_INPUT_BYTES)) return undefined;
  const next: Record<string, string> = {};
  for (const [key, value] of Object.entries(env)) if (value !== undefined) next[key] = value;
  next.GLIBC_TUNABLES = tunables === '' ? TUNABLE : `${tunables}:${TUNABLE}`;
  next[LARGE_PAGES_MARKER] = TUNABLE;
  return next;
}

/** True in a process started by runWithLargePages. */
export function largePagesOn(env: Env = process.env): boolean {
  return env[LARGE_PAGES_MARKER] !== undefined;
}

/** Size of a regular file, 0 for anything else (an option's value, a folder, a missing path). */
function fileSize(path: string): number {
  try {
    const s = statSync(path);
    return s.isFile() ? s.size : 0;
  } catch {
    return 0;
  }
}

/**
 * Runs this command line again with `env`, sharing standard input, output and error; resolves to the
 * exit code. A signal that ends the re-run is raised again here, and the signals a terminal or a
 * supervisor sends to this process only are passed on.
 */
export function runWithLargePages(env: Record<string, string>): Promise<number> {
  const child = spawn(process.execPath, [...process.execArgv, ...process.argv.slice(1)], { env, stdio: 'inherit' });
  const forward = (signal: NodeJS.Signals) => () => void child.kill(signal);
  const handlers = (['SIGINT', 'SIGTERM', 'SIGHUP'] as const).map((signal) => [signal, forward(signal)] as const);
  for (const [signal, handler] of handlers) process.on(signal, handler);
  return new Promise((done, fail) => {
    child.on('error', fail);
    child.on('exit', (code, signal) => {
      for (const [name, handler] of handlers) process.off(name, handler);
      if (signal !== null) {
        process.kill(process.pid, signal);
        return;
      }
      done(code ?? 1);
    });
  });
}
