/**
 * Matching judgments to rows: which judgment, if any, each row of a dump takes, and which pair of a
 * judgments table is judged twice. Each has a path for any order (an index of every pair) and a faster
 * one for the usual layout, rows or judgments grouped by query, which must give the same answer
 * (test/engine/judgments-matching.test.ts holds them to each other and to a slow search).
 */
import { PairIndex } from './pairIndex';

/** True when each query's entries are together, queries in first-seen order (ids climb by at most one). */
export function isGrouped(query: Uint32Array): boolean {
  if (query.length === 0) return true;
  let highest = query[0]!;
  for (let j = 1; j < query.length; j++) {
    const q = query[j]!;
    if (q === query[j - 1]) continue;
    if (q !== highest + 1) return false;
    highest = q;
  }
  return true;
}

/** The judgments as the tables in this module take them: ids of the table's own pools, one entry per judgment. */
export interface JudgmentIds {
  readonly query: Uint32Array;
  readonly item: Uint32Array;
}

/**
 * The first judgment (file order) whose pair was judged before, and that earlier one, for judgments grouped
 * by query: each item remembers the query and judgment that named it last, eight bytes per item, where an
 * index of every pair takes twelve bytes per slot (twice the judgments) and a cache miss per look-up.
 */
export function firstRepeatGrouped(table: JudgmentIds, itemCount: number): [number, number] | undefined {
  // Per item, side by side (one cache line): the query that last named it + 1, and that judgment.
  const last = new Int32Array(2 * itemCount);
  for (let j = 0; j < table.query.length; j++) {
    const q = table.query[j]! + 1;
    const at = 2 * table.item[j]!;
    if (last[at] === q) return [last[at + 1]!, j];
    last[at] = q;
    last[at + 1] = j;
  }
  return undefined;
}

export function firstRepeatAnyOrder(table: JudgmentIds): [number, number] | undefined {
  const first = new PairIndex(table.query.length);
  for (let j = 0; j < table.query.length; j++) {
    const seen = first.add(table.query[j]!, table.item[j]!, j);
    if (seen >= 0) return [seen, j];
  }
  return undefined;
}

/**
 * Rows and judgments on common ids: the row's query and item, and for judgment j its row-side query
 * (`queryOf`, -1 when no row has it) and item (`itemOf`, -1 when no row names it). Items are ids below
 * `itemCount`; a row's item may be -1 (named by no judgment).
 */
export interface RowsAndJudgments {
  readonly rowQuery: Uint32Array;
  readonly rowItem: ArrayLike<number>;
  readonly itemCount: number;
  readonly judgments: number;
  queryOf(j: number): number;
  itemOf(j: number): number;
}

/** The judgment of each row (-1 for none), for any row order: one look-up per row in an index of every pair. */
export function judgmentsByPair(m: RowsAndJudgments): Int32Array {
  const judgmentOf = new PairIndex(m.judgments);
  for (let j = 0; j < m.judgments; j++) {
    const q = m.queryOf(j);
    const i = m.itemOf(j);
    if (q >= 0 && i >= 0) judgmentOf.add(q, i, j);
  }
  const rows = m.rowQuery.length;
  const out = new Int32Array(rows);
  for (let r = 0; r < rows; r++) {
    const i = m.rowItem[r]!;
    out[r] = i < 0 ? -1 : judgmentOf.find(m.rowQuery[r]!, i);
  }
  return out;
}

/** The judgments of each row query: judgment indices order[start[q]] .. order[start[q + 1] - 1], file order. */
export interface JudgmentsByQuery {
  readonly start: Uint32Array;
  readonly order: Uint32Array;
}

/** The judgments of each row query, by a counting sort over every judgment (judgments whose item no row names left out). */
export function judgmentsByRowQuery(m: RowsAndJudgments): JudgmentsByQuery {
  let queries = 0;
  for (let r = 0; r < m.rowQuery.length; r++) queries = Math.max(queries, m.rowQuery[r]! + 1);
  const start = new Uint32Array(queries + 1);
  for (let j = 0; j < m.judgments; j++) {
    const q = m.queryOf(j);
    if (q >= 0 && q < queries && m.itemOf(j) >= 0) start[q + 1]!++;
  }
  for (let q = 0; q < queries; q++) start[q + 1]! += start[q]!;
  const order = new Uint32Array(start[queries]!);
  const next = start.slice(0, queries);
  for (let j = 0; j < m.judgments; j++) {
    const q = m.queryOf(j);
    if (q >= 0 && q < queries && m.itemOf(j) >= 0) order[next[q]!++] = j;
  }
  return { start, order };
}

/**
 * judgmentsByPair for rows grouped by query (the usual dump): for each query's run of rows its judgments
 * (`groups`: judgmentsByRowQuery's, or a stream block's own) mark their items (judgment + 1 in an array by item id), each
 * row reads its item's mark, and the marks are cleared. A pair index misses the cache on nearly every row;
 * the marks take four bytes per item. `mark`, when given, is all zeros and is left so (reused by a caller
 * that joins many blocks).
 */
export function judgmentsByQueryRun(m: Pick<RowsAndJudgments, 'rowQuery' | 'rowItem' | 'itemCount' | 'itemOf'>, groups: JudgmentsByQuery,
  mark: Int32Array<ArrayBufferLike> = new Int32Array(m.itemCount)): Int32Array {
  const rows = m.rowQuery.length;
  const { start, order } = groups;
  const out = new Int32Array(rows);
  const { rowQuery, rowItem } = m;
  for (let r = 0; r < rows;) {
    const q = rowQuery[r]!;
    let end = r + 1;
    while (end < rows && rowQuery[end] === q) end++;
    for (let e = start[q]!; e < start[q + 1]!; e++) mark[m.itemOf(order[e]!)] = order[e]! + 1;
    for (let k = r; k < end; k++) {
      const i = rowItem[k]!;
      out[k] = i < 0 ? -1 : mark[i]! - 1;
    }
    for (let e = start[q]!; e < start[q + 1]!; e++) mark[m.itemOf(order[e]!)] = 0;
    r = end;
  }
  return out;
}

/** Row-level counts of a join: rows with a label of their own, how many the judgments contradict, the first few. */
export interface JoinCounts {
  readonly inlineRows: number;
  readonly disagreements: number;
  readonly examples: readonly string[];
}

/** How many disagreements a join words (readers/judgments.ts notes, the stream's blocks alike). */
export const JOIN_EXAMPLES = 5;

/**
 * The join's rule for each row: its label becomes its judgment's grade, NaN (unjudged) without one; a row
 * with a label of its own that the judgment contradicts is a disagreement. `label` may be `inline` itself
 * (a stream block joins in place). Marks each used judgment in `used`; `rowName` words a row for the examples.
 */
export function applyJudgments(judgmentOf: Int32Array, grade: Float64Array, inline: Float64Array, label: Float64Array, used: Uint8Array,
  rowName: (row: number) => string): JoinCounts {
  let inlineRows = 0;
  let disagreements = 0;
  const examples: string[] = [];
  for (let r = 0; r < judgmentOf.length; r++) {
    const j = judgmentOf[r]!;
    const judged = j < 0 ? NaN : grade[j]!;
    if (j >= 0) used[j] = 1;
    const own = inline[r]!;
    if (own === own) {
      inlineRows++;
      if (own !== judged) {
        disagreements++;
        if (examples.length < JOIN_EXAMPLES) examples.push(`${rowName(r)}: ${own} in the dump, ${judged === judged ? judged : 'unjudged'} in the judgments`);
      }
    }
    label[r] = judged;
  }
  return { inlineRows, disagreements, examples };
}
