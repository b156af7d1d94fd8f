/**
 * Rows grouped by query without one JS object per row: a stable counting sort by interned query id.
 */
import type { RankedDump } from './dump';

export interface QueryGroups {
  /**
   * Row indices, all rows of query 0 first, then query 1, ...; file order within a query. Absent when
   * the dump keeps each query's rows together in first-seen order (the usual dump): the rows of query q
   * are then rows start[q] .. start[q+1] themselves (see `rowOf`).
   */
  readonly rowsOfQuery?: Uint32Array;
  /** queryCount + 1 entries: the rows of query q are rowsOfQuery[start[q] .. start[q+1]). */
  readonly start: Uint32Array;
}

/** The row at position p of the grouped order. */
export function rowOf(groups: QueryGroups, p: number): number {
  return groups.rowsOfQuery === undefined ? p : groups.rowsOfQuery[p]!;
}

/** The rows of query q, in file order. */
export function rowsOfGroup(groups: QueryGroups, q: number): Uint32Array {
  const from = groups.start[q]!;
  const to = groups.start[q + 1]!;
  if (groups.rowsOfQuery !== undefined) return groups.rowsOfQuery.subarray(from, to);
  const rows = new Uint32Array(to - from);
  for (let i = 0; i < rows.length; i++) rows[i] = from + i;
  return rows;
}

/**
 * O(rows + queries): count rows per query, prefix-sum, then place rows in file order. `allocate`
 * makes the two columns (shared memory when score workers will read them). A grouping the read made
 * already for this very query column (`rememberGroups`) is given back instead.
 */
export function groupByQuery(dump: RankedDump, allocate: (length: number) => Uint32Array = (n) => new Uint32Array(n)): QueryGroups {
  const known = remembered.get(dump.query);
  if (known !== undefined && known.start.length === dump.queries.size + 1 && known.start[known.start.length - 1] === dump.rowCount) return known;
  return groupRows(dump.query, dump.rowCount, dump.queries.size, allocate);
}

/** groupByQuery of the first `rows` rows of a query column with ids below `queryCount`. */
export function groupRows(query: Uint32Array, rows: number, queryCount: number, allocate: (length: number) => Uint32Array): QueryGroups {
  const start = allocate(queryCount + 1);
  // Dumps usually keep each query's rows together, and ids are interned in first-seen order, so the
  // query column then climbs by at most one per row and the grouping is the file order itself: one
  // sequential read, and no column of row indices (40 MB at 10M rows) to write and read back.
  let last = -1;
  let r = 0;
  for (; r < rows; r++) {
    const q = query[r]!;
    if (q !== last) {
      if (q !== last + 1) break;
      last = q;
      start[q] = r;
    }
  }
  if (r === rows && last === queryCount - 1) {
    start[queryCount] = rows;
    return { start };
  }
  const rowsOfQuery = allocate(rows);
  start.fill(0);
  countRowsPerQuery(query, 0, rows, start.subarray(1));
  for (let q = 0; q < queryCount; q++) start[q + 1] += start[q]!;
  placeRows(query, 0, rows, start.slice(0, queryCount), rowsOfQuery);
  return { rowsOfQuery, start };
}

/** counts[q] += the rows of query q among rows [from, to): the first pass of the counting sort, by parts on several threads. */
export function countRowsPerQuery(query: Uint32Array, from: number, to: number, counts: Uint32Array): void {
  for (let r = from; r < to; r++) counts[query[r]!]++;
}

/** out[next[query[r]]++] = r for rows [from, to) in order: the second pass, `next` holding where each query's rows of this part begin. */
export function placeRows(query: Uint32Array, from: number, to: number, next: Uint32Array, out: Uint32Array): void {
  for (let r = from; r < to; r++) out[next[query[r]!]!++] = r;
}

/**
 * Groupings made while reading (a file not grouped by query is grouped to key its items), by the query
 * column they group: groupByQuery of a dump with that very column returns it. Weak, so a dump let go
 * takes its grouping with it. Kept in shared memory, as score workers read it.
 */
const remembered = new WeakMap<Uint32Array, QueryGroups>();

/** Lets groupByQuery return `groups` for dumps whose query column is `query` (that object, unchanged). */
export function rememberGroups(query: Uint32Array, groups: QueryGroups): void {
  remembered.set(query, groups);
}

/** A column in shared memory, for a grouping score workers will read. */
export function sharedColumn(length: number): Uint32Array {
  return new Uint32Array(new SharedArrayBuffer(length * 4));
}
