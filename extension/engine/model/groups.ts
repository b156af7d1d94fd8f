/**
 * Rows grouped by query without one JS object per row: a stable counting sort by interned query id.
 */
import type { RankedDump } from './dump';

export interface QueryGroups {
  /** Row indices, all rows of query 0 first, then query 1, ...; file order within a query. */
  readonly rowsOfQuery: Uint32Array;
  /** queryCount + 1 entries: the rows of query q are rowsOfQuery[start[q] .. start[q+1]). */
  readonly start: Uint32Array;
}

/** O(rows + queries): count rows per query, prefix-sum, then place rows in file order. */
export function groupByQuery(dump: RankedDump): QueryGroups {
  const queryCount = dump.queries.size;
  const rows = dump.rowCount;
  const query = dump.query;
  const start = new Uint32Array(queryCount + 1);
  for (let r = 0; r < rows; r++) start[query[r]! + 1]++;
  for (let q = 0; q < queryCount; q++) start[q + 1] += start[q]!;
  const next = start.slice(0, queryCount);
  const rowsOfQuery = new Uint32Array(rows);
  for (let r = 0; r < rows; r++) rowsOfQuery[next[query[r]!]!++] = r;
  return { rowsOfQuery, start };
}
