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
  /** What scoring reads of each row, in the order of rowsOfQuery, when the grouping carried it along. */
  readonly values?: GroupedValues;
}

/**
 * A scattered dump's scored values in grouped order: position p holds row rowsOfQuery[p]'s score and
 * grade, and 1 in `first` when that row's item is the first of its query to name it (its key is its own
 * row). Made while grouping, which reads the rows in file order and writes each to its query's place,
 * so scoring then reads a query's rows side by side instead of from anywhere in 200 MB of columns
 * (threads/keyUngrouped.ts). Only a dump with the very columns they came from may use them
 * (`usableValues`): a judgments join, for one, gives the rows other grades.
 */
export interface GroupedValues {
  readonly score: Float64Array;
  readonly label: Float64Array;
  readonly first: Uint8Array;
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

/**
 * placeRows, also writing the rows' scores and grades to their places (those of GroupedValues in the
 * making): the reads go in file order, the writes to each query's place.
 */
export function placeRowsWithValues(query: Uint32Array, from: number, to: number, next: Uint32Array, out: Uint32Array,
  rowOrder: { readonly score: Float64Array; readonly label: Float64Array }, placed: { readonly score: Float64Array; readonly label: Float64Array }): void {
  const { score, label } = rowOrder;
  const toScore = placed.score;
  const toLabel = placed.label;
  for (let r = from; r < to; r++) {
    const at = next[query[r]!]!++;
    out[at] = r;
    toScore[at] = score[r]!;
    toLabel[at] = label[r]!;
  }
}

/** The row-order columns each GroupedValues was made from. */
const valuesSource = new WeakMap<GroupedValues, { readonly score: Float64Array; readonly label: Float64Array; readonly itemKey: Uint32Array }>();

/** Notes the row-order columns `values` were made from (with the keys of `itemKey`). */
export function noteValuesSource(values: GroupedValues, source: { score: Float64Array; label: Float64Array; itemKey: Uint32Array }): void {
  valuesSource.set(values, source);
}

/** `groups` without its values unless they came from this very dump's score, grade and item key columns. */
export function usableValues(groups: QueryGroups, dump: Pick<RankedDump, 'score' | 'label' | 'itemKey'>): QueryGroups {
  if (groups.values === undefined) return groups;
  const source = valuesSource.get(groups.values);
  const same = (a: Float64Array | Uint32Array | undefined, b: Float64Array | Uint32Array) =>
    a !== undefined && a.buffer === b.buffer && a.byteOffset === b.byteOffset && a.length === b.length;
  if (source !== undefined && same(dump.score, source.score) && same(dump.label, source.label) && same(dump.itemKey, source.itemKey)) return groups;
  return { start: groups.start, ...(groups.rowsOfQuery ? { rowsOfQuery: groups.rowsOfQuery } : {}) };
}

/** A column in shared memory, for a grouping score workers will read. */
export function sharedColumn(length: number): Uint32Array {
  return new Uint32Array(new SharedArrayBuffer(length * 4));
}
