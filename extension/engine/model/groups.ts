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
 * makes the two columns (shared memory when score workers will read them).
 */
export function groupByQuery(dump: RankedDump, allocate: (length: number) => Uint32Array = (n) => new Uint32Array(n)): QueryGroups {
  const queryCount = dump.queries.size;
  const rows = dump.rowCount;
  const query = dump.query;
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
  for (let r = 0; r < rows; r++) start[query[r]! + 1]++;
  for (let q = 0; q < queryCount; q++) start[q + 1] += start[q]!;
  const next = start.slice(0, queryCount);
  for (let r = 0; r < rows; r++) rowsOfQuery[next[query[r]!]!++] = r;
  return { rowsOfQuery, start };
}
