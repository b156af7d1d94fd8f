/**
 * The head of a JSON Lines file, read on this thread before the file is read in ranges (threads/parallel.ts):
 * the lines the shape is learnt from (jsonLines.ts, shapesFrom), read as one thread reads them.
 */
import { promises as fsp } from 'node:fs';
import type { RowColumns } from './columns';
import { HEAD_BYTES, JsonLinesParser, LONG_LINES_BYTES, LONG_SHAPE_LINES } from './jsonLines';
import type { ReadOptions } from './readOptions';
import { assertTextHead, LineSink } from './source';

/** The shape of a JSON Lines file, learnt from its head before the file is read in ranges (parallel.ts). */
export interface JsonLinesHead {
  /** The keys of the lines the shape is learnt from. */
  readonly keys: readonly string[];
  /** True when a line holds lists (a query's rows), false for one row per line. */
  readonly list: boolean;
  /** Rows only: keys whose value is an array or object on those lines (not segments). */
  readonly nested: readonly string[];
  /** The columns and notes the head's lines give the read. */
  readonly rows: RowColumns;
  /** Bytes per row over the head's whole lines (a line of lists holds many rows). */
  readonly bytesPerRow: number;
}

/** A file's first bytes; `whole` when they are the whole file. */
export interface FileHead {
  readonly bytes: Buffer;
  readonly whole: boolean;
}

/**
 * Reads the whole lines of a file's head as one thread would, for their shape. Undefined when a line there
 * is refused (JSON, the roles, the text), or the head holds no row: the file is then read on one thread,
 * which reports any problem as it always does.
 */
export function jsonLinesHead(path: string, head: FileHead, columns: ReadOptions['columns']): JsonLinesHead | undefined {
  try {
    assertTextHead(head.bytes, path);
    const parser = new JsonLinesParser(path, columns, head.bytes.length);
    // A byte order mark needs no skipping: the line's text is trimmed, and JavaScript trims U+FEFF.
    const sink = new LineSink((buf, from, end, line, offset) => parser.acceptLine(buf, from, end, line, offset));
    const read = sink.feed(head.bytes, 0, head.bytes.length, 0, head.whole);
    parser.end();
    const shape = parser.learnedShape;
    const rows = parser.rows;
    if (shape === undefined || rows === undefined || rows.count === 0) return undefined;
    return { keys: shape.keys, list: shape.list, nested: shape.nested, rows, bytesPerRow: read / rows.count };
  } catch {
    return undefined;
  }
}

/**
 * Reads a file's first HEAD_BYTES, and on past them while it holds fewer than LONG_SHAPE_LINES whole lines with a value,
 * up to LONG_LINES_BYTES: every line the shape is learnt from (shapesFrom) is then whole in the head.
 */
export async function fileHead(path: string): Promise<FileHead> {
  const fh = await fsp.open(path, 'r');
  try {
    let head = Buffer.alloc(HEAD_BYTES);
    let used = 0;
    for (;;) {
      const { bytesRead } = await fh.read(head, used, head.length - used, used);
      used += bytesRead;
      if (bytesRead === 0 || used < head.length) return { bytes: head.subarray(0, used), whole: true };
      if (head.length >= LONG_LINES_BYTES || linesIn(head, LONG_SHAPE_LINES) >= LONG_SHAPE_LINES) return { bytes: head, whole: false };
      const grown = Buffer.alloc(Math.min(LONG_LINES_BYTES, head.length * 4));
      head.copy(grown);
      head = grown;
    }
  } finally {
    await fh.close();
  }
}

/**
 * Whole lines in `buf` holding a value (the lines the shape counts), counted up to `enough`. The parser
 * skips a line its text trims to nothing, and JavaScript trims more than ASCII spaces (a form feed, a byte
 * order mark, a no-break space, a line separator); a line holding a value holds a printable ASCII byte other
 * than a space (every JSON value starts with one), and a line the parser trims to nothing holds none.
 */
export function linesIn(buf: Buffer, enough: number): number {
  let count = 0;
  let start = 0;
  for (let at = buf.indexOf(10); at >= 0 && count < enough; at = buf.indexOf(10, start)) {
    for (let i = start; i < at; i++) {
      const b = buf[i]!;
      if (b > 32 && b < 127) {
        count++;
        break;
      }
    }
    start = at + 1;
  }
  return count;
}
