/**
 * The item id of every row kept as its own bytes, one record per row in row order, with no table of
 * distinct values. Interning item ids across the whole dump costs one table lookup per row that
 * misses the CPU caches once items run into the millions (web search, catalogue-scale
 * recommendation), and a table of that size besides. Scoring needs much less: duplicates are found
 * within a query, so a key equal for two rows of one query exactly when they name the same item does
 * (`queryScopedKeys`), and each query's rows are few and close together. The dump-wide ids
 * (`internAll`) are made only for the callers that match items across queries or files (judgments,
 * items tables, comparing runs, a query's detail), and are the very ids interning row by row gives.
 */
import { BytePool, hashBytes } from './bytePool';
import { groupRows, sharedColumn, type QueryGroups } from './groups';
import { ItemProbe, type KeysInOrder } from './itemProbe';

/** The internals of a RowTexts, moved between threads without copying. */
export interface RowTextsState {
  readonly arena: Uint8Array;
  readonly used: number;
  readonly ends: Uint32Array;
  readonly count: number;
}

const decoder = new TextDecoder('utf-8');

export class RowTexts {
  private arena: Uint8Array;
  private used = 0;
  /** Record r is arena[ends[r - 1] (0 for r = 0), ends[r]). */
  private ends: Uint32Array;
  private count = 0;
  /**
   * Records of earlier parts (ranges of a file read on several threads), kept where they were made
   * rather than copied together: rows firstRow[k] .. firstRow[k + 1] are earlier[k]. The own arena
   * above then holds nothing (concat fills only these).
   */
  private earlier: RowTextsState[] = [];
  private firstRow: number[] = [0];

  constructor(rows = 1024, bytesPerRow = 16) {
    this.ends = new Uint32Array(Math.max(16, rows));
    this.arena = new Uint8Array(Math.max(256, Math.ceil(rows * bytesPerRow)));
  }

  get size(): number {
    return this.count;
  }

  /** Forgets every record but keeps the memory, for the next block of a stream thread (stream/block.ts). */
  clear(): void {
    this.used = 0;
    this.count = 0;
    this.earlier = [];
    this.firstRow = [0];
  }

  /** Appends the next row's bytes, bytes[start, end); rows must come in row order, one record each. */
  add(bytes: Uint8Array, start: number, end: number): void {
    const len = end - start;
    const need = this.used + len;
    if (need > this.arena.length || this.count === this.ends.length) this.reserve(this.count + 1, need);
    const arena = this.arena;
    for (let i = 0, at = this.used; i < len; i++) arena[at + i] = bytes[start + i]!;
    this.used = need;
    this.ends[this.count++] = need;
  }

  /**
   * Appends `count` rows whose bytes lie one after another at bytes[from, ...): row r's end, counted
   * from `from`, is ends[r] (so the first row starts at `from`).
   */
  addBlock(bytes: Uint8Array, from: number, ends: Uint32Array, count: number): void {
    if (count === 0) return;
    const len = ends[count - 1]!;
    this.reserve(this.count + count, this.used + len);
    this.arena.set(bytes.subarray(from, from + len), this.used);
    const own = this.ends;
    const base = this.used;
    for (let r = 0; r < count; r++) own[this.count + r] = base + ends[r]!;
    this.used = base + len;
    this.count += count;
  }

  /** Room for `rows` records, the bytes guessed from the records so far. */
  reserveRows(rows: number): void {
    this.reserve(rows, this.count > 0 ? Math.ceil((this.used / this.count) * rows * 1.05) : rows * 16);
  }

  /** Room for `rows` records of `bytes` bytes in all, grown by half again at least when short. */
  reserve(rows: number, bytes: number): void {
    if (bytes > this.arena.length) {
      if (bytes > 0xffffffff) throw new RangeError('item ids larger than 4 GB');
      const grown = new Uint8Array(Math.min(0xffffffff, Math.max(Math.ceil(this.arena.length * 1.5), bytes)));
      grown.set(this.arena.subarray(0, this.used));
      this.arena = grown;
    }
    if (rows > this.ends.length) {
      const grown = new Uint32Array(Math.max(Math.ceil(this.ends.length * 1.5), rows));
      grown.set(this.ends.subarray(0, this.count));
      this.ends = grown;
    }
  }

  /** Row r's bytes (a view into the arena holding them). */
  bytesOf(row: number): Uint8Array {
    if (this.earlier.length === 0) return this.arena.subarray(row === 0 ? 0 : this.ends[row - 1]!, this.ends[row]!);
    const part = this.partOf(row);
    const r = row - this.firstRow[part]!;
    const { arena, ends } = this.earlier[part]!;
    return arena.subarray(r === 0 ? 0 : ends[r - 1]!, ends[r]!);
  }

  /** out[r] = the id of row r's bytes in `pool`, or -1 when the pool lacks them. */
  findEachIn(pool: BytePool, out: Int32Array): void {
    this.lookUpEach(pool, out, false);
  }

  /**
   * Each row's bytes looked up in `pool` (interned when `intern`, else -1 when absent) into out[row], in
   * batches of 64 whose table slots are touched first (BytePool.warm) so their cache misses overlap; read
   * straight from each part's arena (a view per row cost more than the hashing on a million rows).
   */
  private lookUpEach(pool: BytePool, out: Int32Array | Uint32Array, intern: boolean): void {
    const parts = this.earlier.length === 0 ? [this.exportState()] : this.earlier;
    const batch = 64;
    const hashes = new Int32Array(batch);
    const records = new Int32Array(batch);
    const starts = new Uint32Array(batch);
    let row = 0;
    for (const { arena, ends, count } of parts) {
      for (let from = 0; from < count; from += batch) {
        const n = Math.min(batch, count - from);
        for (let b = 0; b < n; b++) {
          const r = from + b;
          const s = r === 0 ? 0 : ends[r - 1]!;
          starts[b] = s;
          hashes[b] = hashBytes(arena, s, ends[r]!);
        }
        pool.warm(hashes, n, records);
        for (let b = 0; b < n; b++) {
          out[row + b] = intern ? pool.internHashed(arena, starts[b]!, ends[from + b]!, hashes[b]!) : pool.findHashed(arena, starts[b]!, ends[from + b]!, hashes[b]!);
        }
        row += n;
      }
    }
  }


  /** True when some row's bytes are in `pool` (a small pool: an items table's keys); stops at the first. */
  namesAnyOf(pool: BytePool): boolean {
    if (pool.size === 0) return false;
    const parts = this.earlier.length === 0 ? [this.exportState()] : this.earlier;
    for (const { arena, ends, count } of parts) {
      for (let r = 0; r < count; r++) {
        const s = r === 0 ? 0 : ends[r - 1]!;
        if (pool.findBytes(arena, s, ends[r]!) >= 0) return true;
      }
    }
    return false;
  }

  text(row: number): string {
    return decoder.decode(this.bytesOf(row));
  }

  exportState(): RowTextsState {
    if (this.earlier.length > 0) throw new Error('internal: a joined RowTexts is not exported');
    return { arena: this.arena, used: this.used, ends: this.ends, count: this.count };
  }

  /** The records of several parts one after another (the parts of a file read in ranges, in file order), not copied. */
  static concat(parts: readonly RowTextsState[]): RowTexts {
    if (parts.length === 1) return RowTexts.fromState(parts[0]!);
    const texts = new RowTexts(0, 0);
    for (const p of parts) {
      texts.earlier.push(p);
      texts.count += p.count;
      texts.firstRow.push(texts.count);
    }
    return texts;
  }

  private static fromState(state: RowTextsState): RowTexts {
    const texts = new RowTexts(0, 0);
    texts.arena = state.arena;
    texts.used = state.used;
    texts.ends = state.ends;
    texts.count = state.count;
    return texts;
  }
  /**
   * Query-scoped keys, written over `column` in place: on entry column[r] is hashBytes of row r's bytes,
   * on return it is the first row of query[r] whose bytes equal row r's (in file order). So two rows of
   * one query get the same key exactly when they name the same item; across queries keys mean nothing.
   * Returns the grouping it made, when the rows are not grouped already (in shared memory, for scoring).
   */
  queryScopedKeys(query: Uint32Array, column: Uint32Array, queryCount: number): QueryGroups | undefined {
    const probe = new ItemProbe();
    if (this.groupedKeys(query, column, probe)) return undefined;
    // Otherwise group the rows by query (a counting sort, file order within a query) and key each group.
    const groups = groupRows(query, this.count, queryCount, sharedColumn);
    this.keyGroups(column, groups, 0, queryCount, probe);
    return groups;
  }

  /** Keys the rows of queries [fromQuery, toQuery) of a grouping (see queryScopedKeys and ItemProbe.keyRun). */
  keyGroups(column: Uint32Array, groups: QueryGroups, fromQuery: number, toQuery: number, probe = new ItemProbe(), inOrder?: KeysInOrder): void {
    const { start, rowsOfQuery } = groups;
    for (let q = fromQuery; q < toQuery; q++) if (start[q + 1]! > start[q]!) probe.keyRun(this, column, start[q]!, start[q + 1]!, rowsOfQuery, inOrder);
  }

  /**
   * queryScopedKeys for the usual dump, which keeps each query's rows together in first-seen order (the
   * query id climbs by at most one per row, from 0): each run of rows is a query. Returns false, with
   * `column` unchanged, for any other order. A parse thread keys its own range of a file this way, with
   * the range's own query ids and row numbers (see `rekeyRows` for a query cut by a range's end).
   */
  groupedKeys(query: Uint32Array, column: Uint32Array, probe = new ItemProbe()): boolean {
    const rows = this.count;
    if (!isGrouped(query, rows)) return false;
    let from = 0;
    for (let i = 1; i <= rows; i++) {
      if (i < rows && query[i] === query[from]) continue;
      probe.keyRun(this, column, from, i, undefined);
      from = i;
    }
    return true;
  }

  /** Query-scoped keys of rows [from, to), all of one query, made again from their bytes (whatever `column` held there). */
  rekeyRows(column: Uint32Array, from: number, to: number): void {
    this.hashRows(column, from, to);
    new ItemProbe().keyRun(this, column, from, to, undefined);
  }

  /** Writes hashBytes of rows [from, to) into `column`: what a reader stores before the keys are made. */
  hashRows(column: Uint32Array, from = 0, to = this.count): void {
    const parts = this.earlier.length === 0 ? [this.exportState()] : this.earlier;
    parts.forEach(({ arena, ends, count }, k) => {
      const first = this.earlier.length === 0 ? 0 : this.firstRow[k]!;
      for (let r = Math.max(from, first); r < Math.min(to, first + count); r++) {
        const i = r - first;
        column[r] = hashBytes(arena, i === 0 ? 0 : ends[i - 1]!, ends[i]!);
      }
    });
  }

  /**
   * Dump-wide ids: each distinct byte string gets the next id in row order (first seen first), the ids a
   * BytePool gives when every row's item is interned in turn.
   */
  internAll(): { readonly pool: BytePool; readonly ids: Uint32Array } {
    const pool = new BytePool();
    const ids = new Uint32Array(this.count);
    this.lookUpEach(pool, ids, true);
    return { pool, ids };
  }

  /** True when rows a and b hold the same bytes. */
  equal(a: number, b: number): boolean {
    const x = this.bytesOf(a);
    const y = this.bytesOf(b);
    const len = x.length;
    if (y.length !== len) return false;
    for (let i = 0; i < len; i++) if (x[i] !== y[i]) return false;
    return true;
  }

  private partOf(row: number): number {
    let part = 0;
    while (row >= this.firstRow[part + 1]! && part + 1 < this.earlier.length) part++;
    return part;
  }
}

/** True when query ids climb by at most one per row from 0 over the first `rows` rows (each query's rows together, in first-seen order). */
export function isGrouped(query: Uint32Array, rows: number): boolean {
  let last = -1;
  for (let r = 0; r < rows; r++) {
    const q = query[r]!;
    if (q === last) continue;
    if (q !== last + 1) return false;
    last = q;
  }
  return true;
}
