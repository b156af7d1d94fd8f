/**
 * Large pages for big inputs, where they pay. A large read fills up to a gigabyte of fresh memory (the row
 * columns, the item bytes), and the kernel faults it in page by page; with glibc's malloc asking for
 * transparent huge pages (the tunable below, glibc 2.35 or later; Node's large ArrayBuffers come from
 * malloc) it takes one fault per 2 MB instead of per 4 KB. A tunable is read when the process starts, so
 * the command line runs itself again once, with the tunable set.
 *
 * Whether that pays depends on the machine. Measured on 2-core virtual machines of one kind, `eval --format
 * json` on the 10M-row distinct-id TSV (632 MB), interleaved:
 * - this one (first writes to fresh memory 2.9–3.1 ms/MB in 4 KB pages, 0.8 in large ones): 2.76–3.22 s
 *   without, 2.24–2.67 s with (user time 3.8 s against 3.1 s), and still 2.68–2.96 against 1.97–2.37 s
 *   with the page cache filling memory (the kernel compacting memory 257 times to find huge pages); every
 *   large file of the bench 10–20% faster; the 100M-row stream 20.4–26.6 s against 18.2–19.8 s;
 * - an earlier one (first writes 2.8–3.7 ms/MB too): 2.49–2.53 s without, 2.84–3.37 s with, the kernel
 *   spending 0.3–1.3 s more system time handing out huge pages than the faults saved.
 * Large pages can save no more than 4 KB faults cost, so unset, it re-runs when an input (inputSize) is at least
 * LARGE_INPUT_BYTES and writing 8 MB of fresh memory here costs at least DEAR_FAULTS_MS_PER_MB (about
 * 25 ms on this machine). GAINLINE_LARGE_PAGES=0 never re-runs (for a machine like the earlier one); =1
 * always does, whatever the size or the probe.
 * The marker variable says a process is the re-run one, so it never runs itself again.
 */
import { spawn } from 'node:child_process';
import { closeSync, openSync, readdirSync, readSync, statSync } from 'node:fs';
import { join, resolve } from 'node:path';

export const LARGE_PAGES_VARIABLE = 'GAINLINE_LARGE_PAGES';
/** Set in the re-run process (value: the tunable it was given). */
export const LARGE_PAGES_MARKER = 'GAINLINE_LARGE_PAGES_RUN';
const TUNABLE = 'glibc.malloc.hugetlb=1';
/** Below this the re-run's start (about 0.1 s) and the probe cost more than the faults they save. */
export const LARGE_INPUT_BYTES = 128 << 20;
/** First writes to fresh memory at least this dear (ms per MB) make large pages pay (see above). */
export const DEAR_FAULTS_MS_PER_MB = 1.5;
const PROBE_BYTES = 8 << 20;
type Env = Readonly<Record<string, string | undefined>>;

/**
 * The environment to run again with, or undefined to run here: on Linux only, not when already re-run, nor
 * when GLIBC_TUNABLES already says something about hugetlb; then when GAINLINE_LARGE_PAGES=1, or when it is
 * unset, a positional argument names an input of at least LARGE_INPUT_BYTES (inputSize) and `faultCost()` (ms per MB)
 * is at least DEAR_FAULTS_MS_PER_MB.
 */
export function largePagesEnv(argv: readonly string[], env: Env, cwd: string, platform: string = process.platform,
  sizeOf: (path: string) => number = inputSize, faultCost: () => number = freshMemoryCost): Record<string, string> | undefined {
  const setting = env[LARGE_PAGES_VARIABLE];
  if (platform !== 'linux' || env[LARGE_PAGES_MARKER] !== undefined || setting === '0') return undefined;
  const tunables = env.GLIBC_TUNABLES ?? '';
  if (tunables.includes('glibc.malloc.hugetlb')) return undefined;
  if (setting !== '1') {
    if (!argv.some((arg) => !arg.startsWith('-') && arg !== '' && sizeOf(resolve(cwd, arg)) >= LARGE_INPUT_BYTES)) return undefined;
    if (faultCost() < DEAR_FAULTS_MS_PER_MB) return undefined;
  }
  const next: Record<string, string> = {};
  for (const [key, value] of Object.entries(env)) if (value !== undefined) next[key] = value;
  next.GLIBC_TUNABLES = tunables === '' ? TUNABLE : `${tunables}:${TUNABLE}`;
  next[LARGE_PAGES_MARKER] = TUNABLE;
  return next;
}

/**
 * The bytes a read of `path` fills memory from, 0 when it names no input (an option's value, a missing
 * path): a plain file's size; a gzip file's text, as its trailer records it (ISIZE, RFC 1952: modulo
 * 2^32, so the compressed size when that is larger), since a 117 MB .gz of 10M rows fills what its 632 MB
 * of text do (read in 3.5–4.2 s without large pages, 1.6–2.2 s with); a folder's Parquet parts together,
 * the files the Parquet reader reads from it.
 */
export function inputSize(path: string): number {
  try {
    const s = statSync(path);
    if (s.isDirectory()) {
      return readdirSync(path).filter((n) => n.toLowerCase().endsWith('.parquet')).reduce((sum, n) => sum + inputSize(join(path, n)), 0);
    }
    return s.isFile() ? Math.max(s.size, gzipTextSize(path, s.size)) : 0;
  } catch {
    return 0;
  }
}

/** The text size a gzip file's trailer records, 0 when the file is not gzip. */
function gzipTextSize(path: string, size: number): number {
  if (size < 18) return 0;
  const fd = openSync(path, 'r');
  try {
    const head = Buffer.alloc(2);
    const trailer = Buffer.alloc(4);
    if (readSync(fd, head, 0, 2, 0) < 2 || head[0] !== 0x1f || head[1] !== 0x8b) return 0;
    return readSync(fd, trailer, 0, 4, size - 4) === 4 ? trailer.readUInt32LE(0) : 0;
  } finally {
    closeSync(fd);
  }
}

/**
 * Milliseconds per MB of the first write to fresh memory in 4 KB pages: PROBE_BYTES newly allocated
 * (malloc maps them fresh and leaves them untouched), one byte written per page.
 */
export function freshMemoryCost(bytes = PROBE_BYTES): number {
  const started = process.hrtime.bigint();
  const fresh = new Uint8Array(new ArrayBuffer(bytes));
  for (let i = 0; i < fresh.length; i += 4096) fresh[i] = 1;
  return Number(process.hrtime.bigint() - started) / 1e6 / (bytes / (1 << 20));
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
