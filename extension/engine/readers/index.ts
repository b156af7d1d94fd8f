/**
 * Public entry of the readers: one call turns any supported dump into the columnar RankedDump.
 *
 * Formats: CSV/TSV with a header (roles from header names or `columns`), JSON Lines (a row or a
 * list per line), run files with a judgments file, sparse feature lines with a scores file, and
 * Parquet (a file or a folder of parts). Text formats may be gzip-compressed.
 *
 * Row positions: `line` is the 1-based line where the row starts and `offset` its first byte in the
 * decompressed text; rows of one JSON list share the list's line and offset; Parquet rows have
 * line 0 and offset -1. Large plain CSV/TSV, JSON Lines and Parquet reads are shared among several
 * threads; their columns are then views of SharedArrayBuffers (see parallel.ts, parquetRanges.ts).
 */
import { CancelledError, InputError } from '../errors';
import { withFields, type RankedDump } from '../model/dump';
import { DelimitedParser } from './delimited';
import { detectFormat } from './detect';
import { readJsonLines } from './jsonLines';
import { readParallelDelimited, readParallelJsonLines, shouldParseInParallel } from '../threads/parallel';
import { readParallelParquet } from '../threads/parquetRanges';
import { readParquet } from './parquet';
import type { ReadOptions } from './readOptions';
import { joinJudgments, readJudgmentTable, sharesQuery, unusedJudgmentsNote, type JudgmentTable } from './judgments';
import { readRunFile } from './runFile';
import { changedSince, fileChangedError, pumpText, statStamp, textSizeHint, throwIfCancelled } from './source';
import { readSparseFeatures } from './sparseFeatures';

export { parseColumnRoles } from './roles';
export type { ColumnRoles } from './roles';
export type { DumpFormat, RankedDump } from '../model/dump';
export type { ReadOptions } from './readOptions';

export async function readDump(path: string, options: ReadOptions = {}): Promise<RankedDump> {
  throwIfCancelled(options.signal);
  const before = await statStamp(path).catch(() => undefined);
  try {
    return await readDumpOnce(path, options);
  } catch (err) {
    // A file rewritten under the reader often shows up first as a broken record or a truncated
    // stream; the rewrite is the cause to report, not the line it happened to break.
    if (!(err instanceof CancelledError) && before !== undefined && await changedSince(path, before)) throw fileChangedError(path);
    throw err;
  }
}

async function readDumpOnce(path: string, options: ReadOptions): Promise<RankedDump> {
  if (options.judgments === undefined) return readFormat(path, options);
  const judgmentsPath = options.judgments;
  // Labels may be absent from the dump when a judgments file gives them.
  const dumpOptions: ReadOptions = { ...options, columns: { ...options.columns, optional: ['label'] } };
  const [dump, table] = await Promise.all([
    readFormat(path, dumpOptions),
    readJudgmentTable(judgmentsPath, options, (p, o) => readFormat(p, o)),
  ]);
  throwIfCancelled(options.signal);
  if (options.judgmentsFound === true && !sharesQuery(dump.queries, table)) return withOwnLabels(path, dump, options);
  return joinJudgments(dump, table, options.missingQueries ?? 'skip');
}

/**
 * The dump of a found judgments file that names none of its queries, as read without the file, with a
 * first note saying why it was not used. The rows already read are that dump when some row has a label
 * (so the label column exists, and making it optional changed nothing) and the judgments file did not
 * decide the format; otherwise the file is read again without it, which reports a missing label column
 * as any read does. Reading twice doubled the editor's first screen whenever an unrelated judgments
 * folder sat beside the dumps (the demo's CSV runs key queries by text, its judgments by id).
 */
async function withOwnLabels(path: string, read: RankedDump, options: ReadOptions): Promise<RankedDump> {
  const { judgments, judgmentsFound: _found, missingQueries: _policy, ...ownOptions } = options;
  const labelled = read.notes.unjudgedRows < read.rowCount;
  const own = labelled && (await detectFormat(path, ownOptions)).format === read.format ? read : await readFormat(path, ownOptions);
  return withFields(own, { notes: { ...own.notes, messages: [unusedJudgmentsNote(judgments!), ...own.notes.messages] } });
}

/** A judgments file read as a dump's judgments are (for a dump that streams and is joined block by block). */
export function readJudgments(judgments: string, options: Pick<ReadOptions, 'judgmentsColumns' | 'signal'> = {}): Promise<JudgmentTable> {
  return readJudgmentTable(judgments, options, (p, o) => readFormat(p, o));
}

async function readFormat(path: string, options: ReadOptions): Promise<RankedDump> {
  const sniffed = await detectFormat(path, options);
  switch (sniffed.format) {
    case 'csv':
    case 'tsv':
      return readDelimited(path, sniffed.format, sniffed.gzip, options);
    case 'jsonl':
      return readJsonLinesFile(path, sniffed.gzip, options);
    case 'run':
      if (options.judgments === undefined) {
        throw new InputError('a judgments file (query unused item grade) to go with the run file (on the command line: --judgments FILE)', path);
      }
      return readRunFile(path, options);
    case 'sparse':
      if (options.scores === undefined) {
        throw new InputError('a scores file (one score per line, same order) to go with the sparse feature file', path);
      }
      return readSparseFeatures(path, options.scores, options);
    case 'parquet':
      return (await readParallelParquet(path, sniffed.directory, options)) ?? readParquet(path, sniffed.directory, options);
  }
}

async function readDelimited(path: string, format: 'csv' | 'tsv', gzip: boolean, options: ReadOptions): Promise<RankedDump> {
  const delimiter = format === 'csv' ? 44 : 9;
  if (!gzip) {
    const threads = await shouldParseInParallel(path, options.threads);
    if (threads > 1 || options.offThread) {
      const dump = await readParallelDelimited(path, format, delimiter, threads, options);
      if (dump !== undefined) return dump;
    }
  }
  const parser = new DelimitedParser({ file: path, delimiter, columns: options.columns, expectedBytes: await textSizeHint(path) });
  const stamp = await pumpText(path, parser, { signal: options.signal, onProgress: options.onProgress });
  const rows = parser.columns!;
  if (rows.count === 0) throw new InputError('at least one data row after the header', path, 2);
  rows.countGaps();
  return rows.finish(path, format, stamp);
}

async function readJsonLinesFile(path: string, gzip: boolean, options: ReadOptions): Promise<RankedDump> {
  if (!gzip) {
    const threads = await shouldParseInParallel(path, options.threads);
    if (threads > 1 || options.offThread) {
      const dump = await readParallelJsonLines(path, threads, options);
      if (dump !== undefined) return dump;
    }
  }
  return readJsonLines(path, options);
}

