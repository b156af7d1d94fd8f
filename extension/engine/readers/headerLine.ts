/**
 * The header line of a delimited file parsed on its own, before the rows are cut into ranges (parallel
 * reading, threads/parallel.ts) or blocks (streaming, stream/fileBlocks.ts), so that its errors read as
 * they do when the whole file is read on one thread.
 */
import type { promises as fsp } from 'node:fs';
import type { RowColumns } from './columns';
import { DelimitedParser } from './delimited';
import type { ColumnRoles } from './roles';
import { assertTextHead } from './source';

export interface HeaderParse {
  readonly parser: DelimitedParser;
  readonly names: string[];
  readonly columns: RowColumns;
  /** Byte just after the header's newline. */
  readonly end: number;
}

/**
 * The parser holding the header, its names and its (still empty) columns with the roles' notes, and the
 * byte just after the header's newline;
 * undefined when the header holds a quote or has no newline (the careful reader handles those).
 */
export async function parseHeaderLine(fh: fsp.FileHandle, path: string, delimiter: number, columns: ColumnRoles | undefined): Promise<HeaderParse | undefined> {
  let head = Buffer.alloc(0);
  for (;;) {
    const more = Buffer.alloc(64 * 1024);
    const { bytesRead } = await fh.read(more, 0, more.length, head.length);
    head = Buffer.concat([head, more.subarray(0, bytesRead)]);
    if (head.indexOf(10) >= 0 || bytesRead === 0) break;
  }
  assertTextHead(head, path);
  const lf = head.indexOf(10);
  const bom = head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf ? 3 : 0;
  if (lf < 0 || head.subarray(0, lf).includes(34)) return undefined;
  const parser = new DelimitedParser({ file: path, delimiter, ...(columns ? { columns } : {}) });
  parser.feed(head, bom, lf + 1, 0, false);
  if (parser.headerNames === undefined || parser.columns === undefined) return undefined;
  return { parser, names: parser.headerNames, columns: parser.columns, end: lf + 1 };
}
