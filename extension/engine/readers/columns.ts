/**
 * Growable typed columns that readers append rows to, and the step that turns them into a RankedDump.
 */
import { BytePool } from '../model/bytePool';
import { gradeRangeOf, summariseRows, type RowSummary } from '../model/rowSummary';
import type { DumpFormat, FileStamp, RankedDump, ReaderNotes, SegmentColumn } from '../model/dump';
import { emptyNotes } from '../model/dump';

/**
 * Column buffers shared between threads: a parse worker writes rows [firstRow, firstRow + rows)
 * of each buffer, so the main thread can compact ranges in place instead of copying them.
 */
export interface SharedColumns {
  readonly firstRow: number;
  readonly rows: number;
  readonly query: SharedArrayBuffer;
  readonly item: SharedArrayBuffer;
  readonly label: SharedArrayBuffer;
  readonly score: SharedArrayBuffer;
  readonly line: SharedArrayBuffer;
  readonly offset: SharedArrayBuffer;
  readonly segmentIds: readonly SharedArrayBuffer[];
}

export class RowColumns {
  query: Uint32Array<ArrayBufferLike>;
  item: Uint32Array<ArrayBufferLike>;
  label: Float64Array<ArrayBufferLike>;
  score: Float64Array<ArrayBufferLike>;
  line: Uint32Array<ArrayBufferLike>;
  offset: Float64Array<ArrayBufferLike>;
  segmentIds: Uint32Array<ArrayBufferLike>[];
  count = 0;
  capacity: number;
  queries = new BytePool();
  items = new BytePool();
  segmentPools: BytePool[];
  readonly notes: ReaderNotes = emptyNotes();

  constructor(
    readonly segmentNames: readonly string[] = [],
    capacity = 1024,
    /** When given, rows go to this slice of shared buffers until it is full (then to private arrays). */
    readonly shared?: SharedColumns,
  ) {
    this.segmentPools = segmentNames.map(() => new BytePool());
    if (shared !== undefined) {
      const at = shared.firstRow;
      const n = shared.rows;
      this.capacity = n;
      this.query = new Uint32Array(shared.query, at * 4, n);
      this.item = new Uint32Array(shared.item, at * 4, n);
      this.label = new Float64Array(shared.label, at * 8, n);
      this.score = new Float64Array(shared.score, at * 8, n);
      this.line = new Uint32Array(shared.line, at * 4, n);
      this.offset = new Float64Array(shared.offset, at * 8, n);
      this.segmentIds = shared.segmentIds.map((b) => new Uint32Array(b, at * 4, n));
      return;
    }
    this.capacity = Math.max(16, capacity);
    this.query = new Uint32Array(this.capacity);
    this.item = new Uint32Array(this.capacity);
    this.label = new Float64Array(this.capacity);
    this.score = new Float64Array(this.capacity);
    this.line = new Uint32Array(this.capacity);
    this.offset = new Float64Array(this.capacity);
    this.segmentIds = segmentNames.map(() => new Uint32Array(this.capacity));
  }

  /** True while every row is still in the shared slice. */
  get inShared(): boolean {
    return this.shared !== undefined && this.query.buffer === this.shared.query;
  }

  /** Makes room for at least `rows` rows in total (call with an estimate to avoid repeated growth). */
  reserve(rows: number): void {
    if (rows <= this.capacity) return;
    const capacity = Math.ceil(rows);
    this.query = grow(this.query, capacity, this.count);
    this.item = grow(this.item, capacity, this.count);
    this.label = grow(this.label, capacity, this.count);
    this.score = grow(this.score, capacity, this.count);
    this.line = grow(this.line, capacity, this.count);
    this.offset = grow(this.offset, capacity, this.count);
    this.segmentIds = this.segmentIds.map((ids) => grow(ids, capacity, this.count));
    this.capacity = capacity;
  }

  /** Index for the next row, growing by half again when full. */
  next(): number {
    if (this.count === this.capacity) this.reserve(this.capacity * 1.5 + 1024);
    return this.count++;
  }

  /** Sets up the row at index `row` in one call (the common case of delimited text). */
  set(row: number, query: number, item: number, label: number, score: number, line: number, offset: number): void {
    this.query[row] = query;
    this.item[row] = item;
    this.label[row] = label;
    this.score[row] = score;
    this.line[row] = line;
    this.offset[row] = offset;
  }

  /** Counts NaN labels and scores and finds the grade range, into the notes (done once at the end, not per row). */
  countGaps(): void {
    this.setGaps(summariseRows(this.label, this.score, 0, this.count));
  }

  /** Notes from row summaries already taken (parse workers summarise their own ranges). */
  setGaps(gaps: RowSummary): void {
    this.notes.unjudgedRows = gaps.unjudged;
    this.notes.missingScoreRows = gaps.missing;
    this.notes.gradeRange = gradeRangeOf(gaps);
  }

  finish(path: string, format: DumpFormat, stamp: FileStamp): RankedDump {
    const n = this.count;
    const segments: SegmentColumn[] = this.segmentNames.map((name, k) => ({
      name,
      values: this.segmentPools[k]!,
      ofRow: this.segmentIds[k]!.subarray(0, n),
    }));
    return {
      path,
      format,
      stamp,
      rowCount: n,
      query: this.query.subarray(0, n),
      item: this.item.subarray(0, n),
      label: this.label.subarray(0, n),
      score: this.score.subarray(0, n),
      line: this.line.subarray(0, n),
      offset: this.offset.subarray(0, n),
      queries: this.queries,
      items: this.items,
      segments,
      notes: this.notes,
    };
  }
}

type Typed = Uint32Array | Float64Array;

function grow<T extends Typed>(old: T, capacity: number, used: number): T {
  const fresh = new (old.constructor as new (n: number) => T)(capacity);
  fresh.set(old.subarray(0, used) as never);
  return fresh;
}
