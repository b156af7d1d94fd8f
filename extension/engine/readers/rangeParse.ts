/**
 * Parses one newline-aligned byte range of a large CSV/TSV file into its own columns and pools.
 * Runs inside a parse worker; the main thread merges ranges in file order (see parallel.ts).
 * A range holding any quote byte is refused, because a quoted newline makes byte-range splitting
 * unsafe; the caller then reads the whole file on one thread.
 */
import { InputError } from '../errors';
import type { BytePoolState } from '../model/bytePool';
import { summariseRows, type RowSummary } from '../model/rowSummary';
import type { SharedColumns } from './columns';
import { DelimitedParser } from './delimited';
import type { ColumnRoles } from './roles';
import { pumpRange, type RecordSink } from './source';

export interface RangeTask {
  readonly path: string;
  readonly start: number;
  readonly end: number;
  readonly delimiter: number;
  readonly names: string[];
  readonly columns?: ColumnRoles;
  readonly chunkBytes: number;
  readonly shared?: SharedColumns;
}


export type RangeResult =
  | {
      readonly kind: 'rows';
      readonly count: number;
      /** Newlines consumed in the range: the next range starts that many lines later. */
      readonly lines: number;
      /** True when all rows are in the task's shared slice; the column fields below are then empty. */
      readonly inShared: boolean;
      readonly query: Uint32Array;
      readonly item: Uint32Array;
      readonly label: Float64Array;
      readonly score: Float64Array;
      /** Line numbers counted from 1 at the range start. */
      readonly line: Uint32Array;
      readonly offset: Float64Array;
      readonly segmentIds: Uint32Array[];
      readonly queries: BytePoolState;
      readonly items: BytePoolState;
      readonly segmentPools: BytePoolState[];
      /** Gaps and grade extremes of the range, taken here so the main thread need not scan every row. */
      readonly gaps: RowSummary;
    }
  | { readonly kind: 'quoted' }
  | { readonly kind: 'error'; readonly expected: string; readonly file?: string; readonly line?: number; readonly found?: string };

class QuotedRange extends Error {}

/** Refuses any chunk with a quote byte before handing it to the parser. */
class QuoteGuard implements RecordSink {
  constructor(private readonly inner: RecordSink) {}

  feed(buf: Buffer, start: number, end: number, base: number, final: boolean): number {
    const quote = buf.indexOf(34, start);
    if (quote >= 0 && quote < end) throw new QuotedRange();
    return this.inner.feed(buf, start, end, base, final);
  }
}

export async function parseRange(task: RangeTask, onBytes: (done: number) => void): Promise<RangeResult> {
  const parser = new DelimitedParser({ file: task.path, delimiter: task.delimiter, columns: task.columns, expectedBytes: task.end - task.start,
    shared: task.shared }, { names: task.names });
  try {
    await pumpRange(task.path, task.start, task.end, new QuoteGuard(parser), onBytes, task.chunkBytes);
  } catch (err) {
    if (err instanceof QuotedRange) return { kind: 'quoted' };
    if (err instanceof InputError) return { kind: 'error', expected: err.expected, file: err.file, line: err.line, found: err.found };
    throw err;
  }
  const rows = parser.columns!;
  const n = rows.count;
  const pools = {
    queries: rows.queries.exportState(),
    items: rows.items.exportState(),
    segmentPools: rows.segmentPools.map((p) => p.exportState()),
    gaps: summariseRows(rows.label, rows.score, 0, n),
  };
  if (rows.inShared) {
    const none = new Uint32Array(0);
    const noneF = new Float64Array(0);
    return { kind: 'rows', count: n, lines: parser.line - 1, inShared: true, query: none, item: none, label: noneF, score: noneF, line: none,
      offset: noneF, segmentIds: [], ...pools };
  }
  return {
    kind: 'rows',
    count: n,
    lines: parser.line - 1,
    inShared: false,
    query: rows.query.subarray(0, n),
    item: rows.item.subarray(0, n),
    label: rows.label.subarray(0, n),
    score: rows.score.subarray(0, n),
    line: rows.line.subarray(0, n),
    offset: rows.offset.subarray(0, n),
    segmentIds: rows.segmentIds.map((ids) => ids.subarray(0, n)) as Uint32Array[],
    ...pools,
  } as RangeResult;
}

/** The buffers of a result, to transfer rather than copy between threads. */
export function transferList(result: RangeResult): ArrayBuffer[] {
  if (result.kind !== 'rows') return [];
  const columns: ArrayBufferView[] = result.inShared ? [] : [result.query, result.item, result.label, result.score, result.line, result.offset, ...result.segmentIds];
  const pools = [result.queries, result.items, ...result.segmentPools];
  const views: ArrayBufferView[] = [...columns, ...pools.flatMap((p) => [p.arena, p.starts, p.table])];
  return views.map((v) => v.buffer as ArrayBuffer);
}
