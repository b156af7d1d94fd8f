/**
 * A problem with the user's input (file content, options). The command line prints `message`
 * on one line and exits 2, without a stack trace; the extension shows it in the editor.
 */
export class InputError extends Error {
  constructor(
    /** What was expected, in plain words: "a number in column 'score'". */
    readonly expected: string,
    /** The file at fault, when there is one. */
    readonly file?: string,
    /** 1-based line in the (decompressed) file, when known. */
    readonly line?: number,
    /** What was found instead, shortened for display. */
    readonly found?: string,
  ) {
    super(formatInputError(expected, file, line, found));
    this.name = 'InputError';
  }
}

/**
 * A quoted field still open where the text ends. At the end of a file it is the reader's error; at the
 * end of a range of a file read in parallel it may be a quoted newline the cut fell on (threads/parallel.ts).
 */
export class UnclosedQuoteError extends InputError {}

function formatInputError(expected: string, file?: string, line?: number, found?: string): string {
  const where = file ? (line ? `${file}:${line}: ` : `${file}: `) : '';
  const got = found !== undefined ? ` (found ${JSON.stringify(found.length > 60 ? found.slice(0, 57) + '...' : found)})` : '';
  return `${where}expected ${expected}${got}`;
}

/** Thrown when the caller cancelled (AbortSignal); not an error to report. */
export class CancelledError extends Error {
  constructor() {
    super('cancelled');
    this.name = 'CancelledError';
  }
}
