/**
 * Per-query facts for reports once a queries table is joined: the query's text and the value of every
 * segment column (the dump's own and the table's), a query taking the value of its first row in the file
 * as the segment views do.
 */
import type { RankedDump } from '../model/dump';
import { segmentRowsOf } from '../stream/segmentRows';
import type { StreamedDump } from '../stream/streamEvaluate';

export interface QueryFacts {
  /** Text by query id; absent when the queries table has no text column. */
  readonly text?: readonly string[];
  readonly segments: readonly { readonly name: string; readonly values: readonly string[] }[];
}

/** undefined when no queries table was joined (reports then keep their plain shape). */
export function queryFacts(dump: Pick<RankedDump, 'joined' | 'queries' | 'rowCount' | 'query' | 'segments'>): QueryFacts | undefined {
  if (dump.joined?.queriesFile === undefined) return undefined;
  const queryCount = dump.queries.size;
  const firstRow = new Int32Array(queryCount).fill(-1);
  for (let r = 0; r < dump.rowCount; r++) if (firstRow[dump.query[r]!] === -1) firstRow[dump.query[r]!] = r;
  const segments = dump.segments.map((s) => ({
    name: s.name,
    values: Array.from(firstRow, (r) => (r < 0 ? '' : s.values.get(s.ofRow[r]!))),
  }));
  return { ...(dump.joined.queryText ? { text: dump.joined.queryText } : {}), segments };
}

/** queryFacts of a streamed dump: its rows are one per query, each query's first (stream/segmentRows.ts). */
export function streamedQueryFacts(dump: StreamedDump): QueryFacts | undefined {
  return queryFacts({ ...segmentRowsOf(dump), queries: dump.queries });
}
