/**
 * Where the command line writes. Commands never touch `process` directly, so tests can run them
 * in-process and capture everything they print.
 */
export interface CliIO {
  /** Writes to standard output as-is (callers add their own newlines); bytes are UTF-8 text already encoded. */
  readonly out: (text: string | Uint8Array) => void;
  /** Writes to standard error as-is. */
  readonly err: (text: string) => void;
  /** True when standard error is a terminal; progress lines are shown only then. */
  readonly isTTY: boolean;
  /** Directory relative paths are resolved against. */
  readonly cwd: string;
  /** Standard input, for a dump named `-`. */
  readonly stdin?: () => AsyncIterable<Uint8Array>;
}

export function processIO(): CliIO {
  return {
    out: (text) => {
      process.stdout.write(text);
    },
    err: (text) => {
      process.stderr.write(text);
    },
    isTTY: Boolean(process.stderr.isTTY),
    cwd: process.cwd(),
    stdin: () => process.stdin,
  };
}

/** An in-memory CliIO for tests: everything written is kept in `stdout` / `stderr`. */
export function memoryIO(cwd: string = process.cwd(), input?: Uint8Array): CliIO & { stdout: () => string; stderr: () => string } {
  const outParts: string[] = [];
  const decoder = new TextDecoder();
  const errParts: string[] = [];
  return {
    out: (text) => void outParts.push(typeof text === 'string' ? text : decoder.decode(text)),
    err: (text) => void errParts.push(text),
    isTTY: false,
    cwd,
    ...(input !== undefined ? { stdin: async function* () { yield input; } } : {}),
    stdout: () => outParts.join(''),
    stderr: () => errParts.join(''),
  };
}
