/**
 * Metric means per value of a segment column (locale, device, ...). A query belongs to the value of its
 * first row in the file. With query weights (dump.joined.queryWeight) the means are weighted like the summary.
 */
import type { RankedDump } from '../model/dump';
import type { Evaluation } from './types';

export interface SegmentRow {
  value: string;
  queries: number;
  /** Per metric, same order as evaluation.metrics; NaN when no query of the segment has a value. */
  means: number[];
}

/** What the means read of a dump: its rows' queries and segment values, and the query weights. */
export type SegmentedRows = Pick<RankedDump, 'rowCount' | 'query' | 'segments' | 'joined'>;

/** Rows sorted by number of queries (most first), then by value. */
export function segmentBreakdown(dump: SegmentedRows, evaluation: Evaluation, segmentIndex: number): SegmentRow[] {
  const segment = dump.segments[segmentIndex];
  if (!segment) throw new RangeError(`segment ${segmentIndex} out of range 0..${dump.segments.length - 1}`);
  const queryCount = evaluation.queryCount;
  const firstRow = new Int32Array(queryCount).fill(-1);
  let pending = queryCount;
  for (let r = 0; r < dump.rowCount && pending > 0; r++) {
    const q = dump.query[r]!;
    if (firstRow[q] === -1) {
      firstRow[q] = r;
      pending--;
    }
  }
  const valueCount = segment.values.size;
  const metricCount = evaluation.metrics.length;
  const queries = new Uint32Array(valueCount);
  const sums = new Float64Array(valueCount * metricCount);
  // Weight totals per (value, metric): 1 per query unless the means are weighted by query.
  const counts = new Float64Array(valueCount * metricCount);
  const weights = dump.joined?.queryWeight;
  for (let q = 0; q < queryCount; q++) {
    const r = firstRow[q]!;
    if (r < 0) continue;
    const v = segment.ofRow[r]!;
    queries[v]!++;
    for (let m = 0; m < metricCount; m++) {
      const x = evaluation.perQuery.values[m]![q]!;
      const w = weights ? weights[q]! : 1;
      if (x === x && w === w) {
        sums[v * metricCount + m] += w * x;
        counts[v * metricCount + m] += w;
      }
    }
  }
  const out: SegmentRow[] = [];
  for (let v = 0; v < valueCount; v++) {
    if (queries[v] === 0) continue;
    const means: number[] = [];
    for (let m = 0; m < metricCount; m++) {
      const c = counts[v * metricCount + m]!;
      means.push(c > 0 ? sums[v * metricCount + m]! / c : NaN);
    }
    out.push({ value: segment.values.get(v), queries: queries[v]!, means });
  }
  out.sort((a, b) => b.queries - a.queries || (a.value < b.value ? -1 : a.value > b.value ? 1 : 0));
  return out;
}
