/**
 * Large pages for malloc, on request. A large read fills up to a gigabyte of fresh memory, and with
 * glibc's malloc asking for transparent huge pages (the tunable below, glibc 2.35 or later) the kernel
 * faults it in 2 MB pages instead of 4 KB ones. A tunable is read when the process starts, so the
 * command line runs itself again once with it set.
 *
 * Off unless GAINLINE_LARGE_PAGES=1: measured on the 10M-row distinct-id TSV (632 MB) on the 2-core
 * machine, interleaved, `eval --format json`: with huge pages 2.84–3.37 s wall, 0.83–1.83 s system
 * time (74,000 minor faults); without 2.49–2.53 s, 0.45–0.58 s (245,000). User time was the same
 * (3.8–4.1 s), so the fewer faults saved nothing while the kernel spent more system time handing out
 * huge pages, and more still the first time a process asks for them after a while. On the 100M-row
 * stream: 22.3–27.8 s with, 22.8–23.6 s without. (An earlier reader measured 5.3 s of user time
 * falling to 3.7 s with them; today's gains nothing.)
 *
 * The marker variable says a process is the re-run one, so it never runs itself again.
 */
import { spawn } from 'node:child_process';

export const LARGE_PAGES_VARIABLE = 'GAINLINE_LARGE_PAGES';
/** Set in the re-run process (value: the tunable it was given). */
export const LARGE_PAGES_MARKER = 'GAINLINE_LARGE_PAGES_RUN';
const TUNABLE = 'glibc.malloc.hugetlb=1';
type Env = Readonly<Record<string, string | undefined>>;

/**
 * The environment to run again with, or undefined to run here: on Linux only when GAINLINE_LARGE_PAGES=1,
 * not when already re-run and not when GLIBC_TUNABLES already says something about hugetlb.
 */
export function largePagesEnv(env: Env, platform: string = process.platform): Record<string, string> | undefined {
  if (platform !== 'linux' || env[LARGE_PAGES_MARKER] !== undefined || env[LARGE_PAGES_VARIABLE] !== '1') return undefined;
  const tunables = env.GLIBC_TUNABLES ?? '';
  if (tunables.includes('glibc.malloc.hugetlb')) return undefined;
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
