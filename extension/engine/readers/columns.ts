/**
 * Growable typed columns that readers append rows to, and the step that turns them into a RankedDump.
 */
import { engineActivity } from '../config';
import { BytePool, hashBytes } from '../model/bytePool';
import { rememberGroups, type QueryGroups } from '../model/groups';
import { RowTexts } from '../model/rowTexts';
import { addSummaries, gradeRangeOf, summariseRows, type RowSummary } from '../model/rowSummary';
import type { DumpFormat, FileStamp, RankedDump, ReaderNotes, SegmentColumn } from '../model/dump';
import { emptyNotes } from '../model/dump';

const textEncoder = new TextEncoder();
/** setItemText's encoding buffer, reused. */
let textScratch = new Uint8Array(256);

/**
 * The per-row columns every reader fills, described once. The row arrays of RowColumns, the shared
 * buffers of a parallel read, a parse range's result and the merge of ranges are all derived from
 * this table. `merge` says what a later range's values need when ranges are put together in file
 * order: ids re-interned through the merged pool of that name, line numbers shifted by the lines
 * before the range, or nothing. (Segment columns are a list of id columns, one per segment pool.)
 */
export const ROW_COLUMNS = {
  query: { array: Uint32Array, merge: 'queries' },
  // Readers that keep item bytes per row (RowColumns.itemTexts) store each row's item hash here.
  item: { array: Uint32Array, merge: 'none' },
  label: { array: Float64Array, merge: 'none' },
  score: { array: Float64Array, merge: 'none' },
  line: { array: Uint32Array, merge: 'lines' },
  offset: { array: Float64Array, merge: 'none' },
} as const;

export type RowColumnName = keyof typeof ROW_COLUMNS;
export const ROW_COLUMN_NAMES = Object.keys(ROW_COLUMNS) as RowColumnName[];
type ArrayOf<K extends RowColumnName> = (typeof ROW_COLUMNS)[K]['array'] extends Uint32ArrayConstructor ? Uint32Array<ArrayBufferLike> : Float64Array<ArrayBufferLike>;

/** One typed array per row column. */
export type RowArrays = { -readonly [K in RowColumnName]: ArrayOf<K> };

/**
 * A typed array of `rows` elements of the column's type over `buffer` from row `at` (a fresh array without a
 * buffer). A buffer of no bytes is a column the read does not keep (the row offsets, see sharedSlices in
 * threads/parallel.ts): its arrays are empty whatever the rows.
 */
export function rowArray<K extends RowColumnName>(name: K, rows: number, buffer?: ArrayBufferLike, at = 0): ArrayOf<K> {
  const Typed = ROW_COLUMNS[name].array as unknown as { new (n: number): ArrayOf<K>; new (b: ArrayBufferLike, at: number, n: number): ArrayOf<K>; BYTES_PER_ELEMENT: number };
  if (buffer === undefined) return rows < SHARED_FROM_ROWS ? new Typed(rows) : new Typed(new SharedArrayBuffer(rows * Typed.BYTES_PER_ELEMENT), 0, rows);
  return buffer.byteLength === 0 ? new Typed(0) : new Typed(buffer, at * Typed.BYTES_PER_ELEMENT, rows);
}

/**
 * Columns of this many rows or more are made in shared memory even when one thread reads them: scoring
 * threads then read them where they are. A read on one thread (a gzip file) posted its grades, scores and
 * item keys to the score thread by copying: 200 MB more at 10M rows, and 0.2 s.
 */
const SHARED_FROM_ROWS = 1 << 16;

/** Every row column as arrays made by `make`. */
export function rowArrays(make: <K extends RowColumnName>(name: K) => ArrayOf<K>): RowArrays {
  const arrays = {} as Record<RowColumnName, unknown>;
  for (const name of ROW_COLUMN_NAMES) arrays[name] = make(name);
  return arrays as RowArrays;
}

/**
 * Column buffers shared between threads: a parse worker writes rows [firstRow, firstRow + rows)
 * of each buffer, so the main thread can compact ranges in place instead of copying them.
 */
export type SharedColumns = { readonly [K in RowColumnName]: SharedArrayBuffer } & {
  readonly firstRow: number;
  readonly rows: number;
  readonly segmentIds: readonly SharedArrayBuffer[];
};

/** Typed views of rows [firstRow, firstRow + count) of a shared slice. */
export function sharedViews(slice: SharedColumns, count: number): RowArrays & { segmentIds: Uint32Array[] } {
  const at = slice.firstRow;
  return {
    ...rowArrays((name) => rowArray(name, count, slice[name], at)),
    segmentIds: slice.segmentIds.map((b) => new Uint32Array(b, at * 4, count)),
  };
}

export class RowColumns implements RowArrays {
  query!: Uint32Array<ArrayBufferLike>;
  item!: Uint32Array<ArrayBufferLike>;
  label!: Float64Array<ArrayBufferLike>;
  score!: Float64Array<ArrayBufferLike>;
  line!: Uint32Array<ArrayBufferLike>;
  offset!: Float64Array<ArrayBufferLike>;
  segmentIds: Uint32Array<ArrayBufferLike>[];
  count = 0;
  capacity: number;
  queries = new BytePool();
  /** Item ids interned dump-wide, for readers that do not keep `itemTexts`. */
  items = new BytePool();
  /**
   * When set, every row's item bytes go here in row order and `item` holds their hash (hashBytes) until
   * `finish`, which turns it into query-scoped keys; dump-wide ids are made only when asked for.
   */
  itemTexts: RowTexts | undefined;
  /** Set when `item` holds query-scoped keys already (made by the parse threads of a parallel read), not hashes. */
  itemKeysMade = false;
  /** The grouping by query made to key the items of rows not grouped by query, kept for scoring (groupByQuery). */
  groups: QueryGroups | undefined;
  /**
   * False when the shared slice keeps no row offsets (its offset buffer has no bytes): `offset` then stays
   * empty, and a write to it is a no-op (a typed array ignores writes past its end).
   */
  readonly keepsOffsets: boolean;
  segmentPools: BytePool[];
  readonly notes: ReaderNotes = emptyNotes();
  /** Gaps of rows [0, summarisedTo), kept as rows are appended (appendSummary). */
  private summary = addSummaries([]);
  private summarisedTo = 0;

  constructor(
    readonly segmentNames: readonly string[] = [],
    capacity = 1024,
    /** When given, rows go to this slice of shared buffers until it is full (then to private arrays). */
    readonly shared?: SharedColumns,
    /** Keep item bytes per row (`itemTexts`) instead of interning item ids; bytes per row of a guess at the size. */
    itemTextBytes?: number,
    /** With `itemTextBytes`: keep them in this store, cleared first, rather than a new one (a stream thread's blocks). */
    reusedTexts?: RowTexts,
  ) {
    this.segmentPools = segmentNames.map(() => new BytePool());
    this.keepsOffsets = shared === undefined || shared.offset.byteLength > 0;
    reusedTexts?.clear();
    if (itemTextBytes !== undefined) this.itemTexts = reusedTexts ?? new RowTexts(shared?.rows ?? capacity, itemTextBytes);
    if (shared !== undefined) {
      this.capacity = shared.rows;
      const views = sharedViews(shared, shared.rows);
      Object.assign(this, rowArrays((name) => views[name] as never));
      this.segmentIds = views.segmentIds;
      return;
    }
    this.capacity = Math.max(16, capacity);
    Object.assign(this, rowArrays((name) => rowArray(name, this.capacity)));
    this.segmentIds = segmentNames.map(() => rowArray('query', this.capacity));
  }

  /** True while every row is still in the shared slice. */
  get inShared(): boolean {
    return this.shared !== undefined && this.query.buffer === this.shared.query;
  }

  /** Makes room for at least `rows` rows in total (call with an estimate to avoid repeated growth). */
  reserve(rows: number): void {
    if (rows <= this.capacity) return;
    const capacity = Math.ceil(rows);
    Object.assign(this, rowArrays((name) => (name === 'offset' && !this.keepsOffsets ? this.offset : grow(this[name] as Typed, capacity, this.count)) as never));
    this.segmentIds = this.segmentIds.map((ids) => grow(ids, capacity, this.count));
    this.itemTexts?.reserveRows(capacity);
    this.capacity = capacity;
  }

  /** Index for the next row, growing by half again when full. */
  next(): number {
    if (this.count === this.capacity) this.reserve(this.capacity * 1.5 + 1024);
    return this.count++;
  }

  /**
   * Row `row`'s item given as text (formats decoded to strings): its UTF-8 bytes go to the row texts and
   * their hash to the item column, as a delimited reader stores them from the file's bytes.
   */
  setItemText(row: number, text: string): void {
    if (textScratch.length < 3 * text.length) textScratch = new Uint8Array(3 * text.length);
    // Three bytes per UTF-16 unit always suffice, so encodeInto writes the whole string.
    const length = textEncoder.encodeInto(text, textScratch).written;
    this.setItemBytes(row, textScratch, 0, length);
  }

  /** Row `row`'s item given as UTF-8 bytes[start, end): kept in the row texts, their hash in the item column. */
  setItemBytes(row: number, bytes: Uint8Array, start: number, end: number): void {
    this.item[row] = hashBytes(bytes, start, end);
    this.itemTexts!.add(bytes, start, end);
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

  /**
   * Adds `count` rows about to be appended (from row `this.count` on) to the summary of the rows so far,
   * as the record kernel counted them while parsing (a pass over the columns at the end read 16 bytes a row
   * from memory again). Rows appended since the last call by other paths
   * are summarised from the columns first, so the summary always covers rows [0, summarisedTo).
   */
  appendSummary(summary: RowSummary, count: number): void {
    this.catchUpSummary();
    this.summary = addSummaries([this.summary, summary]);
    this.summarisedTo = this.count + count;
  }

  /** Unjudged and missing-score rows and the grade extremes of every row appended. */
  gaps(): RowSummary {
    this.catchUpSummary();
    return this.summary;
  }

  /** Counts NaN labels and scores and finds the grade range, into the notes (done once at the end, not per row). */
  countGaps(): void {
    this.setGaps(this.gaps());
  }

  private catchUpSummary(): void {
    if (this.summarisedTo >= this.count) return;
    this.summary = addSummaries([this.summary, summariseRows(this.label, this.score, this.summarisedTo, this.count)]);
    this.summarisedTo = this.count;
  }

  /** Notes from row summaries already taken (parse workers summarise their own ranges). */
  setGaps(gaps: RowSummary): void {
    this.notes.unjudgedRows = gaps.unjudged;
    this.notes.missingScoreRows = gaps.missing;
    this.notes.gradeRange = gradeRangeOf(gaps);
  }

  finish(path: string, format: DumpFormat, stamp: FileStamp): RankedDump {
    const n = this.count;
    // The pools outlive the read: they let go of its last chunk.
    for (const pool of [this.queries, this.items, ...this.segmentPools]) pool.forgetCaller();
    const texts = this.itemTexts;
    if (texts !== undefined && texts.size !== n) throw new Error(`internal: ${texts.size} item records for ${n} rows`);
    const segments: SegmentColumn[] = this.segmentNames.map((name, k) => ({
      name,
      values: this.segmentPools[k]!,
      ofRow: this.segmentIds[k]!.subarray(0, n),
    }));
    const dump = {
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
    if (texts === undefined) return dump;
    const itemKey = dump.item;
    if (!this.itemKeysMade) this.groups = texts.queryScopedKeys(dump.query, itemKey, this.queries.size);
    if (this.groups !== undefined) rememberGroups(dump.query, this.groups);
    return withLazyItemIds({ ...dump, itemKey, itemTexts: texts }, texts);
  }
}

/**
 * The dump with `item` and `items` made from the row texts on first use (both at once, then kept):
 * only matching across queries or files needs them. They are enumerable, so a spread copy of the dump
 * (judgments and tables joins) carries plain values.
 */
function withLazyItemIds(dump: Omit<RankedDump, 'item' | 'items'>, texts: RowTexts): RankedDump {
  let made: ReturnType<RowTexts['internAll']> | undefined;
  const ids = () => {
    if (made === undefined) {
      made = texts.internAll();
      engineActivity().itemIdsMade++;
    }
    return made;
  };
  return Object.defineProperties(dump, {
    item: { get: () => ids().ids, enumerable: true, configurable: true },
    items: { get: () => ids().pool, enumerable: true, configurable: true },
  }) as RankedDump;
}

type Typed = Uint32Array<ArrayBufferLike> | Float64Array<ArrayBufferLike>;

function grow<T extends Typed>(old: T, capacity: number, used: number): T {
  const Made = old.constructor as { new (n: number): T; new (b: ArrayBufferLike, at: number, n: number): T; BYTES_PER_ELEMENT: number };
  const fresh = capacity < SHARED_FROM_ROWS ? new Made(capacity) : new Made(new SharedArrayBuffer(capacity * Made.BYTES_PER_ELEMENT), 0, capacity);
  fresh.set(old.subarray(0, used) as never);
  return fresh;
}
