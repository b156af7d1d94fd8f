/**
 * Query-scoped item keys (model/rowTexts.ts) made one query at a time: a small open-addressing set of
 * the query's rows by item hash, emptied per query by a stamp. A row's key is the first row of its
 * query naming the same item (its own row when none before does).
 */
import type { QueryGroups } from './groups';

/** What keying asks of the rows' item bytes (RowTexts): whether two rows name the same item. */
export interface ItemBytes {
  equal(a: number, b: number): boolean;
}

/**
 * Where keying notes, by position in the grouping's order, which rows keep their own row as key (1) or
 * repeat an item of their query (0): GroupedValues.first, for the scoring after (threads/keyUngrouped.ts).
 */
export interface KeysInOrder {
  readonly first: Uint8Array;
}

/**
 * queryScopedKeys' keys for queries [fromQuery, toQuery) of a grouping from the hashes alone, for a
 * thread that holds no item bytes: a query whose rows all hash apart is keyed (each row its own key);
 * a query where two rows share a hash is left as it is (its hashes) and listed, for a thread with the
 * bytes to key (RowTexts.keyGroups). Two distinct ids share a 32-bit hash about once in 4e9 pairs of rows.
 */
export function keyGroupsByHash(column: Uint32Array, groups: QueryGroups, fromQuery: number, toQuery: number, inOrder?: KeysInOrder): number[] {
  const { start, rowsOfQuery } = groups;
  const probe = new ItemProbe();
  const left: number[] = [];
  for (let q = fromQuery; q < toQuery; q++) {
    if (start[q + 1]! > start[q]! && !probe.keyRunByHash(column, start[q]!, start[q + 1]!, rowsOfQuery, inOrder)) left.push(q);
  }
  return left;
}

export class ItemProbe {
  private stamps = new Int32Array(256);
  private rowAt = new Uint32Array(256);
  private hashAt = new Int32Array(256);
  private stamp = 0;
  private gathered = new Int32Array(256);

  /** keyRun without the bytes (`keyRun(undefined, ...)`): true when the query was keyed, false when two rows share a hash. */
  keyRunByHash(column: Uint32Array, from: number, to: number, order: Uint32Array | undefined, inOrder?: KeysInOrder): boolean {
    return this.keyRun(undefined, column, from, to, order, inOrder);
  }

  /**
   * Keys rows from..to of the query (order[from..to) when given, else the rows themselves): on entry
   * column[r] is the hash of row r's bytes. Without `texts` (a thread that holds no item bytes) two rows
   * sharing a hash cannot be told apart: the rows keyed so far get their hashes back and the answer is
   * false, for a thread with the bytes to key the query.
   */
  keyRun(texts: ItemBytes | undefined, column: Uint32Array, from: number, to: number, order: Uint32Array | undefined, inOrder?: KeysInOrder): boolean {
    const mask = this.prepare(to - from);
    const stamp = ++this.stamp;
    const { stamps, rowAt, hashAt } = this;
    const hashes = this.gather(column, from, to, order);
    for (let p = from; p < to; p++) {
      const r = order === undefined ? p : order[p]!;
      const h = hashes[p - from]!;
      let slot = h & mask;
      let key = r;
      while (stamps[slot] === stamp) {
        if (hashAt[slot] === h) {
          if (texts === undefined) {
            // Rare: one pass that writes as it goes, undone, rather than two passes every time.
            for (let s = 0; s <= mask; s++) if (stamps[s] === stamp) column[rowAt[s]!] = hashAt[s]!;
            return false;
          }
          if (texts.equal(rowAt[slot]!, r)) {
            key = rowAt[slot]!;
            break;
          }
        }
        slot = (slot + 1) & mask;
      }
      if (key === r) {
        stamps[slot] = stamp;
        rowAt[slot] = r;
        hashAt[slot] = h;
      }
      column[r] = key;
      if (inOrder !== undefined) inOrder.first[p] = key === r ? 1 : 0;
    }
    return true;
  }

  /**
   * The hashes of rows from..to, read in a loop of loads alone: through `order` the rows lie anywhere in
   * the file, and a tight loop keeps more of those cache misses in flight than the probing loop does (10M
   * rows in random order: the worker's half took 0.15–0.18 against 0.18–0.23 s; this thread's, which
   * compares bytes, about the same either way).
   */
  private gather(column: Uint32Array, from: number, to: number, order: Uint32Array | undefined): Int32Array {
    if (to - from > this.gathered.length) this.gathered = new Int32Array(2 * (to - from));
    const out = this.gathered;
    if (order === undefined) for (let p = from; p < to; p++) out[p - from] = column[p]!;
    else for (let p = from; p < to; p++) out[p - from] = column[order[p]!]!;
    return out;
  }

  /** Sizes the table for a query of `rows` rows; returns the slot mask. */
  private prepare(rows: number): number {
    // Sparse tables probe less (0.05 extra probes a row at an eighth full, 0.31 at 40%: on 100-row queries
    // 55 against 92–144 ms for 10M rows alone); very long queries get a table twice their size.
    let size = 256;
    while (size < (rows <= 4096 ? 8 : 2) * rows) size *= 2;
    if (size > this.stamps.length) {
      this.stamps = new Int32Array(size);
      this.rowAt = new Uint32Array(size);
      this.hashAt = new Int32Array(size);
      this.stamp = 0;
    }
    return size - 1;
  }
}
