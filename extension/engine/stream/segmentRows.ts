/**
 * A streamed dump as the segment means read a dump (evaluate/segments.ts): one row per query, its first,
 * carrying the query's segment values. A query belongs to the value of its first row in either case, and
 * the means are summed over queries in query order both ways, so `segmentBreakdown` gives the in-memory
 * rows to the bit (test/engine/stream-segments.test.ts).
 */
import type { SegmentedRows } from '../evaluate/segments';
import type { StreamedDump } from './streamEvaluate';

export function segmentRowsOf(dump: StreamedDump): SegmentedRows {
  // Judged queries the run lacks (missing queries `zero`) have no row, as in memory: they belong to no segment.
  const n = dump.firstAbsentQuery ?? dump.queries.size;
  const query = new Uint32Array(n);
  for (let q = 0; q < n; q++) query[q] = q;
  return {
    rowCount: n,
    query,
    segments: (dump.querySegments ?? []).map((s) => ({ name: s.name, values: s.values, ofRow: s.ofQuery.subarray(0, n) })),
    ...(dump.joined ? { joined: dump.joined } : {}),
  };
}
