/**
 * Per-segment view of a comparison: for each value of an extra column (locale, device, ...), the paired
 * mean of A, B and Δ and the wins / ties / losses, per metric. A query takes the value of its first row
 * in run A; queries whose rows disagree are counted, not split.
 */
import { InputError } from '../errors';
import type { RankedDump } from '../model/dump';
import { groupByQuery, rowOf } from '../model/groups';
import type { Comparison } from './compare';
import type { LoopControl } from './pacer';
import { bootstrapMeanIntervals, pairedTTest, signFlipTest, type Interval, type SignFlipResult, type TTestResult } from './stats';

export interface SegmentMetricDelta {
  readonly key: string;
  /** Queries of the segment paired for this metric. */
  readonly paired: number;
  readonly meanA: number;
  readonly meanB: number;
  readonly meanDelta: number;
  readonly wins: number;
  readonly ties: number;
  readonly losses: number;
}

export interface SegmentRow {
  readonly value: string;
  /** Common queries with this value. */
  readonly queries: number;
  readonly metrics: readonly SegmentMetricDelta[];
}

export interface SegmentDeltas {
  readonly column: string;
  /** Segments in descending order of query count. */
  readonly rows: readonly SegmentRow[];
  /** Queries whose rows carry more than one value of the column (assigned by their first row). */
  readonly mixedQueries: number;
}

/** `dumpA` must be the run A the comparison was made from (its query ids index `comparison.perQuery.queryA`). */
export function segmentDeltas(comparison: Comparison, dumpA: RankedDump, column: string): SegmentDeltas {
  const { segment, valueOfPair, mixedQueries } = pairValues(comparison, dumpA, column);
  const valueCount = segment.values.size;
  const { a, b, delta } = comparison.perQuery;
  const queriesOf = new Uint32Array(valueCount);
  for (let i = 0; i < valueOfPair.length; i++) queriesOf[valueOfPair[i]!]!++;
  const tolerance = comparison.options.tieTolerance;

  const perMetric = comparison.metrics.map((spec, m) => {
    const paired = new Uint32Array(valueCount);
    const sumA = new Float64Array(valueCount);
    const sumB = new Float64Array(valueCount);
    const wins = new Uint32Array(valueCount);
    const losses = new Uint32Array(valueCount);
    const dm = delta[m]!;
    for (let i = 0; i < dm.length; i++) {
      const d = dm[i]!;
      if (!Number.isFinite(d)) continue;
      const v = valueOfPair[i]!;
      paired[v]!++;
      sumA[v]! += a[m]![i]!;
      sumB[v]! += b[m]![i]!;
      if (d > tolerance) wins[v]!++;
      else if (d < -tolerance) losses[v]!++;
    }
    return (v: number): SegmentMetricDelta => {
      const n = paired[v]!;
      const meanA = n > 0 ? sumA[v]! / n : Number.NaN;
      const meanB = n > 0 ? sumB[v]! / n : Number.NaN;
      return { key: spec.key, paired: n, meanA, meanB, meanDelta: meanB - meanA, wins: wins[v]!, ties: n - wins[v]! - losses[v]!, losses: losses[v]! };
    };
  });

  const rows: SegmentRow[] = [];
  for (let v = 0; v < valueCount; v++) {
    if (queriesOf[v] === 0) continue;
    rows.push({ value: segment.values.get(v), queries: queriesOf[v]!, metrics: perMetric.map((row) => row(v)) });
  }
  rows.sort((x, y) => y.queries - x.queries || (x.value < y.value ? -1 : 1));
  return { column, rows, mixedQueries };
}

/** One segment's paired test of one metric: the same interval and tests as the whole comparison's row. */
export interface SegmentSignificance {
  readonly value: string;
  /** Paired queries of the segment (the metric is defined in both runs). */
  readonly paired: number;
  /** 95% percentile-bootstrap interval of the segment's mean Δ (NaN bounds when resampling is off). */
  readonly interval: Interval;
  readonly tTest: TTestResult;
  readonly randomization: SignFlipResult;
}

/**
 * The interval and tests of the main comparison, applied to each segment's paired differences of
 * metric `m`, with the comparison's own resamples, permutations and seed. Segments are tested one by
 * one and not adjusted for their number: read a small p in one of many segments with that in mind.
 */
export async function segmentSignificance(comparison: Comparison, dumpA: RankedDump, column: string, m: number, loop: LoopControl = {}): Promise<SegmentSignificance[]> {
  const { segment, valueOfPair } = pairValues(comparison, dumpA, column);
  const dm = comparison.perQuery.delta[m]!;
  const byValue = new Map<number, number[]>();
  for (let i = 0; i < dm.length; i++) {
    if (!Number.isFinite(dm[i]!)) continue;
    const list = byValue.get(valueOfPair[i]!);
    if (list) list.push(dm[i]!);
    else byValue.set(valueOfPair[i]!, [dm[i]!]);
  }
  const o = comparison.options;
  const out: SegmentSignificance[] = [];
  for (const [v, list] of byValue) {
    const d = Float64Array.from(list);
    const [interval] = await bootstrapMeanIntervals([d], { ...loop, resamples: o.bootstrap, seed: o.seed });
    const randomization = await signFlipTest(d, { ...loop, permutations: o.permutations, seed: o.seed, key: comparison.metrics[m]!.key });
    out.push({ value: segment.values.get(v), paired: d.length, interval: interval!, tTest: pairedTTest(d), randomization });
  }
  return out;
}

/** Each paired query's segment value: the value of its first row in run A (mixed queries counted). */
function pairValues(comparison: Comparison, dumpA: RankedDump, column: string) {
  const segment = dumpA.segments.find((s) => s.name === column);
  if (!segment) {
    const known = dumpA.segments.map((s) => s.name);
    throw new InputError(`a segment column of run A (${known.length ? known.join(', ') : 'it has none'})`, dumpA.path, undefined, column);
  }
  const groups = groupByQuery(dumpA);
  const { queryA } = comparison.perQuery;
  const valueOfPair = new Uint32Array(queryA.length);
  let mixedQueries = 0;
  for (let i = 0; i < queryA.length; i++) {
    const q = queryA[i]!;
    const first = segment.ofRow[rowOf(groups, groups.start[q]!)]!;
    valueOfPair[i] = first;
    for (let k = groups.start[q]! + 1; k < groups.start[q + 1]!; k++) {
      if (segment.ofRow[rowOf(groups, k)] !== first) {
        mixedQueries++;
        break;
      }
    }
  }
  return { segment, valueOfPair, mixedQueries };
}
