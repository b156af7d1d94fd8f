/**
 * One query's rows fetched back from an SQL engine (the editor's query detail), as a one-query dump,
 * so the local engine's detail (positions, ideal order, inverted pairs) reads them unchanged. The rows
 * come in the table's row order (file order, or NO_ORDER_RULE's), so repeated rows and ties resolve as
 * the SQL did.
 */
import { RowColumns } from '../readers/columns';
import type { DumpFormat, RankedDump } from '../model/dump';

export interface QueryRows {
  readonly query: string;
  readonly items: readonly string[];
  /** NaN for a missing or non-numeric score. */
  readonly scores: readonly number[];
  /** NaN for an unjudged row. */
  readonly labels: readonly number[];
}

/** A dump holding only `rows` (query id 0); no lines or byte offsets (the rows live in a database). */
export function dumpOfQueryRows(rows: QueryRows, path: string, format: DumpFormat): RankedDump {
  const columns = new RowColumns([], rows.items.length);
  const query = columns.queries.internString(rows.query);
  rows.items.forEach((item, i) => {
    const score = rows.scores[i]!;
    columns.set(columns.next(), query, columns.items.internString(item), rows.labels[i]!, Number.isFinite(score) ? score : NaN, 0, -1);
  });
  columns.countGaps();
  return columns.finish(path, format, { size: 0, mtimeMs: 0 });
}
