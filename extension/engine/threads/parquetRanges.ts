/**
 * A large Parquet read shared among threads, as a large text file's ranges are (parallel.ts): the footers
 * are read here, and the row groups are taken together into tasks of about equal rows. Each task's rows are
 * known from the footers, so its shared slice is exactly its size. A row group is never cut: each share of
 * it would read the whole column chunk and decode every page up to its rows. A file written as one row group
 * of 10M rows took 24 s on two threads cut so, against 12.6 s on one (a writer may put a column's 10M
 * values in one page). A read of a single row group stays on one thread.
 */
import { availableParallelism } from 'node:os';
import { InputError } from '../errors';
import type { RankedDump } from '../model/dump';
import { columnsOf, openPart, partFiles, partsColumns, rowGroups, stampOf, type OpenPart, type ParquetColumns, type ParquetPiece } from '../readers/parquet';
import type { RangeTask } from '../readers/rangeParse';
import type { ReadOptions } from '../readers/readOptions';
import type { RowColumns } from '../readers/columns';
import { idleKeptThreads } from './keptPools';
import { inRanges, sharedSlices } from './parallel';

/**
 * Rows from which a read is shared: about 1.6 µs a row on one thread (10M distinct-id rows, 2 cores), so
 * 500k rows take 0.8 s against a worker's 0.1 s start; with a kept parse thread idle (started already), 100k.
 */
const PARALLEL_FROM_ROWS = 500_000;
const KEPT_PARALLEL_FROM_ROWS = 100_000;
/**
 * Below this many bytes in all, a read goes to one thread without its footers being read twice: 10M
 * distinct-id rows take 144 MB written by DuckDB, so 1 MB holds about 70k rows, fewer than either threshold.
 */
const SMALL_BYTES = 1 << 20;
const MAX_THREADS = 4;

/** Threads for a Parquet read of `rows` rows: explicit wins; otherwise from its size. */
export function parquetThreads(rows: number, threads: number | undefined): number {
  if (threads !== undefined) return Math.max(1, Math.min(16, Math.floor(threads)));
  const kept = idleKeptThreads('parseWorker');
  if (kept > 0 && rows >= KEPT_PARALLEL_FROM_ROWS) return Math.min(MAX_THREADS, availableParallelism(), kept + 1);
  return rows < PARALLEL_FROM_ROWS ? 1 : Math.min(MAX_THREADS, availableParallelism());
}

/**
 * Reads a Parquet file or folder on several threads; undefined (read it on one thread, which reports any
 * problem as it always does) when a footer or the columns are refused, or the rows are too few to share.
 */
export async function readParallelParquet(path: string, directory: boolean, options: ReadOptions): Promise<RankedDump | undefined> {
  const parts = await (directory ? partFiles(path) : Promise.resolve([path])).catch(() => undefined);
  const stamp = parts && await stampOf(parts).catch(() => undefined);
  if (options.threads === undefined && stamp !== undefined && stamp.size < SMALL_BYTES) return undefined;
  const layout = parts && stamp && await parquetLayout(parts, options).catch(() => undefined);
  if (parts === undefined || stamp === undefined || layout === undefined) return undefined;
  const threads = parquetThreads(layout.rows, options.threads);
  if (threads <= 1 || layout.pieces.filter((p) => p.end > p.start).length < 2) return undefined;
  return inRanges(threads, options, async () => ({
    path, format: 'parquet', linesBefore: 0, headerRows: layout.headerRows,
    empty: () => new InputError('at least one row in the Parquet data', path),
    stamp,
    changed: async (before) => {
      const now = await stampOf(parts).catch(() => undefined);
      return now === undefined || now.size !== before.size || now.mtimeMs !== before.mtimeMs;
    },
    cut: async (count) => {
      const tasks = cutPieces(layout.pieces, Math.ceil(layout.rows / count));
      const sizes = tasks.map((pieces) => pieces.reduce((n, p) => n + p.end - p.start, 0));
      const slices = sharedSlices(sizes, layout.headerRows.segmentNames.length, options.rowOffsets !== false);
      let first = 0;
      const rangeTasks: RangeTask[] = tasks.map((pieces, k) => {
        first += sizes[k]!;
        return { path, start: first - sizes[k]!, end: first, delimiter: 0, names: [], chunkBytes: 0, shared: slices[k],
          parquet: { pieces, names: layout.columns.names, roles: layout.columns.roles } };
      });
      return { tasks: rangeTasks, slices, size: layout.rows };
    },
  }));
}

interface ParquetLayout {
  readonly columns: ParquetColumns;
  readonly headerRows: RowColumns;
  /** Every row group of every part, in order. */
  readonly pieces: readonly ParquetPiece[];
  readonly rows: number;
}

async function parquetLayout(parts: readonly string[], options: ReadOptions): Promise<ParquetLayout> {
  const opened: OpenPart[] = [];
  for (const part of parts) opened.push(await openPart(part));
  const { columns, note } = partsColumns(opened, options);
  const headerRows = columnsOf(columns, 16);
  if (note !== undefined) headerRows.notes.messages.push(note);
  const pieces = opened.flatMap((o) => rowGroups(o));
  const rows = pieces.reduce((n, p) => n + p.end - p.start, 0);
  return { columns, headerRows, pieces, rows };
}

/**
 * The pieces (whole row groups) taken together, in order, into tasks of at least `target` rows (the last may
 * hold fewer).
 */
export function cutPieces(pieces: readonly ParquetPiece[], target: number): ParquetPiece[][] {
  const tasks: ParquetPiece[][] = [];
  let current: ParquetPiece[] = [];
  let held = 0;
  for (const piece of pieces) {
    if (piece.end === piece.start) continue;
    current.push(piece);
    held += piece.end - piece.start;
    if (held >= target) {
      tasks.push(current);
      current = [];
      held = 0;
    }
  }
  if (current.length > 0) tasks.push(current);
  return tasks;
}
