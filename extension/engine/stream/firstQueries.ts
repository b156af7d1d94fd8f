/**
 * The queries of a dump's first rows, read without reading the dump: a judgments file found beside a dump
 * that judges one of them certainly goes with the dump, so the dump can stream joined to it at once rather
 * than stream, find the file related, and stream again. One that judges none of them may still judge later
 * queries; the stream then checks it against every query, as before (worker/streamSession.ts).
 */
import { promises as fsp } from 'node:fs';
import type { StringPool } from '../model/stringPool';
import { DelimitedParser } from '../readers/delimited';
import { detectFormat } from '../readers/detect';
import { sharesQuery, type JudgmentTable } from '../readers/judgments';
import type { ReadOptions } from '../readers/readOptions';
import { pumpRange } from '../readers/source';
import { blockBounds, readHeaderLine } from './fileBlocks';
import { labelOptional } from './sharedJudgments';

/** How much of the file is read: whole lines from the first megabyte after the header. */
const FIRST_BYTES = 1 << 20;

/**
 * The query ids in the first whole lines of a plain CSV/TSV dump, or undefined when those lines cannot be
 * read on their own (another format, gzip, a quoted header or field, a malformed row: the read proper
 * reports what is wrong).
 */
export async function firstQueries(path: string, options: Pick<ReadOptions, 'columns' | 'format'>, bytes = FIRST_BYTES): Promise<StringPool | undefined> {
  const sniffed = await detectFormat(path, options).catch(() => undefined);
  if (sniffed === undefined || (sniffed.format !== 'csv' && sniffed.format !== 'tsv') || sniffed.gzip) return undefined;
  const delimiter = sniffed.format === 'csv' ? 44 : 9;
  const columns = labelOptional(options.columns);
  try {
    const header = await readHeaderLine(path, delimiter, columns);
    if (header === undefined) return undefined;
    const { size } = await fsp.stat(path);
    const bounds = await blockBounds(path, header.end, size, bytes);
    const end = bounds[1] ?? size;
    const parser = new DelimitedParser({ file: path, delimiter, columns, expectedBytes: end - header.end }, { names: header.names });
    await pumpRange(path, header.end, end, parser, () => undefined, Math.max(4096, end - header.end));
    return parser.columns!.queries;
  } catch {
    return undefined;
  }
}

/** True when the judgments judge one of the dump's first queries (false when those cannot be read). */
export async function judgesFirstQueries(path: string, table: JudgmentTable, options: Pick<ReadOptions, 'columns' | 'format'>): Promise<boolean> {
  const queries = await firstQueries(path, options);
  return queries !== undefined && queries.size > 0 && sharesQuery(queries, table);
}
