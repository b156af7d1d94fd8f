/**
 * Parses one newline-aligned byte range of a large CSV/TSV or JSON Lines file (or a share of a Parquet
 * read's pieces, threads/parquetRanges.ts) into its own columns and pools.
 * A JSON Lines file may be cut at any newline: JSON strings hold no raw line break.
 * Runs inside a parse worker; the main thread merges ranges in file order (see parallel.ts).
 * Quoted fields are parsed as on one thread. A cut at a newline may fall inside a quoted field (a quoted
 * newline): the range before it then ends inside the quotes, and is answered `quoted`, for the caller
 * to read the whole file on one thread. A range that ends outside any quotes ended on a record's end,
 * so when every range does, each began on a record's start (the first one does), as one thread sees it.
 */
import { InputError, UnclosedQuoteError } from '../errors';
import type { BytePoolState } from '../model/bytePool';
import type { RowTextsState } from '../model/rowTexts';
import type { RowSummary } from '../model/rowSummary';
import { ROW_COLUMN_NAMES, rowArray, rowArrays, type RowArrays, type RowColumns, type SharedColumns } from './columns';
import { DelimitedParser } from './delimited';
import { JsonLinesParser, type JsonShape } from './jsonLines';
import { columnsOf, readParquetTask, type ParquetTask } from './parquet';
import type { ColumnRoles } from './roles';
import { LineSink, pumpRange, type ReadBuffers, type RecordSink } from './source';
import type { UnreadFields } from './unreadFields';

export interface RangeTask {
  readonly path: string;
  readonly start: number;
  readonly end: number;
  /** CSV/TSV: the delimiter and the header's column names. */
  readonly delimiter: number;
  readonly names: string[];
  /** JSON Lines: the first line's keys and whether lines hold lists (delimiter and names are then unused). */
  readonly json?: JsonShape;
  /** Parquet: the pieces to read (start and end then count rows, for progress; nothing else is used). */
  readonly parquet?: ParquetTask;
  readonly columns?: ColumnRoles;
  readonly chunkBytes: number;
  readonly shared?: SharedColumns;
}


/** The rows of one parsed range: every row column (line numbers counted from 1 at the range start). */
export type RangeRows = Readonly<RowArrays> & {
  readonly kind: 'rows';
  readonly count: number;
  /** Newlines consumed in the range: the next range starts that many lines later. */
  readonly lines: number;
  /** True when all rows are in the task's shared slice; the row columns are then empty. */
  readonly inShared: boolean;
  readonly segmentIds: Uint32Array[];
  readonly queries: BytePoolState;
  /** Each row's item bytes, in row order (the item column holds their hashes, or keys: see itemKeys). */
  readonly itemTexts: RowTextsState;
  /**
   * True when the range's rows are grouped by query and the item column holds query-scoped keys
   * (RowTexts.groupedKeys) counted from the range's first row, made here so the main thread need not.
   */
  readonly itemKeys: boolean;
  readonly segmentPools: BytePoolState[];
  /** Gaps and grade extremes of the range, taken here so the main thread need not scan every row. */
  readonly gaps: RowSummary;
  /** JSON Lines: lines holding keys the file's shape lacks (line numbers counted as `line`'s are). */
  readonly unreadFields?: UnreadFields;
};

export type RangeResult =
  | RangeRows
  | { readonly kind: 'quoted' }
  | { readonly kind: 'error'; readonly expected: string; readonly file?: string; readonly line?: number; readonly found?: string };

export async function parseRange(task: RangeTask, onBytes: (done: number) => void, reuse?: ReadBuffers): Promise<RangeResult> {
  let rows: RowColumns;
  let lines = 0;
  let unreadFields: UnreadFields | undefined;
  try {
    if (task.parquet !== undefined) {
      rows = columnsOf(task.parquet, 1024, task.shared);
      await readParquetTask(task.parquet, rows, onBytes);
    } else {
      const parser = rangeParser(task);
      await pumpRange(task.path, task.start, task.end, parser.sink, onBytes, task.chunkBytes, reuse);
      rows = parser.rows();
      lines = parser.lines();
      unreadFields = parser.unreadFields();
    }
  } catch (err) {
    if (err instanceof UnclosedQuoteError) return { kind: 'quoted' };
    if (err instanceof InputError) return { kind: 'error', expected: err.expected, file: err.file, line: err.line, found: err.found };
    throw err;
  }
  const n = rows.count;
  const itemKeys = rows.itemTexts!.groupedKeys(rows.query, rows.item);
  const pools = {
    queries: rows.queries.exportState(),
    itemTexts: rows.itemTexts!.exportState(),
    segmentPools: rows.segmentPools.map((p) => p.exportState()),
    gaps: rows.gaps(),
  };
  const columns = rowArrays((name) => (rows.inShared ? rowArray(name, 0) : rows[name].subarray(0, n) as never));
  const segmentIds = rows.inShared ? [] : rows.segmentIds.map((ids) => ids.subarray(0, n)) as Uint32Array[];
  return { kind: 'rows', count: n, lines, inShared: rows.inShared, ...columns, segmentIds, ...pools, itemKeys, unreadFields };
}

/** The parser of a range's format: what the bytes go to, its rows, and the newlines it consumed. */
function rangeParser(task: RangeTask): { sink: RecordSink; rows: () => RowColumns; lines: () => number; unreadFields: () => UnreadFields | undefined } {
  if (task.json !== undefined) {
    const json = new JsonLinesParser(task.path, task.columns, task.end - task.start, { ...task.json, shared: task.shared });
    const sink = new LineSink((buf, start, end, line, offset) => json.acceptLine(buf, start, end, line, offset));
    return { sink, rows: () => json.rows!, lines: () => sink.linesRead, unreadFields: () => json.unreadFields };
  }
  const delimited = new DelimitedParser({ file: task.path, delimiter: task.delimiter, columns: task.columns, expectedBytes: task.end - task.start,
    shared: task.shared }, { names: task.names });
  return { sink: delimited, rows: () => delimited.columns!, lines: () => delimited.line - 1, unreadFields: () => undefined };
}

/** A thread's share of a read: the ranges it claimed, each with its index in the file's list of ranges. */
export type ClaimedRanges = [number, RangeResult][];

/**
 * Parses ranges of `tasks` one after another, each claimed from the shared counter next[0]
 * (Atomics.add), until none is left: every parsing thread runs this, so a thread slowed by a busy
 * machine or a late start simply takes fewer ranges. `onBytes` gets the bytes this thread has done.
 * A range ending inside quotes ends the claims of every thread (the caller then reads on one thread).
 */
export async function parseClaimedRanges(tasks: readonly RangeTask[], next: Int32Array, onBytes: (done: number) => void): Promise<ClaimedRanges> {
  const parsed: ClaimedRanges = [];
  const buffers: ReadBuffers = {};
  let before = 0;
  for (;;) {
    const k = Atomics.add(next, 0, 1);
    if (k >= tasks.length) return parsed;
    const task = tasks[k]!;
    const result = await parseRange(task, (bytes) => onBytes(before + bytes), buffers);
    parsed.push([k, result]);
    before += task.end - task.start;
    if (result.kind === 'quoted') {
      Atomics.store(next, 0, tasks.length);
      return parsed;
    }
  }
}

/** The buffers of a result, to transfer rather than copy between threads. */
export function transferList(result: RangeResult): ArrayBuffer[] {
  if (result.kind !== 'rows') return [];
  const columns: ArrayBufferView[] = result.inShared ? [] : [...ROW_COLUMN_NAMES.map((name) => result[name]), ...result.segmentIds];
  const pools = [result.queries, ...result.segmentPools];
  const views: ArrayBufferView[] = [...columns, ...pools.flatMap((p) => [p.arena, p.starts, p.table]), result.itemTexts.arena, result.itemTexts.ends];
  // Columns made in shared memory (columns.ts) are shared as they are: a shared buffer cannot be transferred.
  return [...new Set(views.map((v) => v.buffer))].filter((b): b is ArrayBuffer => !(b instanceof SharedArrayBuffer));
}
