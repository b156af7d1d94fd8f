/**
 * Compare mode in the worker: the overview model of a comparison, the per-query deltas table (sort,
 * filter by text, outcome and segment, page) and the per-segment deltas.
 */
import type { Comparison } from '../engine/compare/compare';
import { segmentDeltas, segmentSignificance } from '../engine/compare/segments';
import type { RankedDump } from '../engine/model/dump';
import { groupByQuery, rowOf } from '../engine/model/groups';
import type {
  CompareOverviewModel,
  ComparePage,
  ComparePageParams,
  CompareRow,
  CompareSegmentTable,
  Outcome,
  SortSpec,
} from '../protocol/messages';
import { toMaybe } from './queryTable';
import { conventionsView, fileInfo, metricLabel } from './viewModels';

const collator = new Intl.Collator('en', { numeric: true });

export function outcomeOf(delta: number, tolerance: number): Outcome | null {
  if (!Number.isFinite(delta)) return null;
  return delta > tolerance ? 'win' : delta < -tolerance ? 'loss' : 'tie';
}

export function compareOverviewModel(c: Comparison, a: RankedDump, b: RankedDump, loadMs: number): CompareOverviewModel {
  return {
    runA: fileInfo(a),
    runB: fileInfo(b),
    conventions: conventionsView(c.conventions),
    headline: c.headline,
    metrics: c.byMetric.map((m, i) => ({
      key: m.key,
      label: metricLabel(c.metrics[i]!),
      meanA: toMaybe(m.summary.meanA),
      meanB: toMaybe(m.summary.meanB),
      delta: toMaybe(m.summary.meanDifference),
      wins: m.summary.wins,
      ties: m.summary.ties,
      losses: m.summary.losses,
      tests: [
        { test: 'paired t-test', statistic: toMaybe(m.tTest.t), pValue: toMaybe(m.tTest.p), adjustedP: toMaybe(m.adjusted.tTest.holm) },
        { test: 'Wilcoxon signed-rank', statistic: toMaybe(m.wilcoxon.statistic), pValue: toMaybe(m.wilcoxon.p), adjustedP: toMaybe(m.adjusted.wilcoxon.holm) },
        { test: 'randomization (paired sign flips)', statistic: null, pValue: toMaybe(m.randomization.p), adjustedP: toMaybe(m.adjusted.randomization.holm) },
      ],
      intervalLow: toMaybe(m.interval.low),
      intervalHigh: toMaybe(m.interval.high),
    })),
    pairedQueries: c.match.commonA.length,
    onlyInA: c.match.onlyInA,
    onlyInB: c.match.onlyInB,
    tieTolerance: c.options.tieTolerance,
    segmentColumns: a.segments.map((s) => s.name),
    warnings: [...c.warnings, ...c.methodNotes],
    loadMs: Math.round(loadMs),
  };
}

export class CompareTable {
  private readonly orderCache = new Map<string, Uint32Array>();
  private segmentOfPair: Map<string, Uint32Array> = new Map();

  constructor(
    private readonly comparison: Comparison,
    private readonly dumpA: RankedDump,
  ) {}

  metricIndex(key: string | undefined): number {
    if (key === undefined) return this.comparison.headline;
    const m = this.comparison.metrics.findIndex((spec) => spec.key === key);
    if (m < 0) throw new Error(`unknown metric '${key}'`);
    return m;
  }

  page(params: ComparePageParams): ComparePage {
    const m = this.metricIndex(params.metric);
    const sort: SortSpec = params.sort ?? { key: 'delta', descending: false };
    const cacheKey = JSON.stringify([m, sort.key, sort.descending, params.filter ?? '', params.outcome, params.segment]);
    let order = this.orderCache.get(cacheKey);
    if (!order) {
      order = this.sorted(this.filtered(m, params), m, sort);
      if (this.orderCache.size >= 8) this.orderCache.delete(this.orderCache.keys().next().value!);
      this.orderCache.set(cacheKey, order);
    }
    const offset = Math.max(0, Math.min(Math.floor(params.offset), order.length));
    const end = Math.min(order.length, offset + Math.max(0, Math.min(Math.floor(params.limit), 10_000)));
    const rows: CompareRow[] = [];
    for (let i = offset; i < end; i++) rows.push(this.row(order[i]!, m, i));
    return { total: order.length, offset, metric: this.comparison.metrics[m]!.key, rows };
  }

  /** Index of the common query (same as comparison.perQuery) by name, or -1. */
  pairOf(query: string): number {
    const id = this.dumpA.queries.find(query);
    if (id < 0) return -1;
    return this.comparison.perQuery.queryA.indexOf(id);
  }

  async segments(column: string, metric: string | undefined): Promise<CompareSegmentTable> {
    const m = this.metricIndex(metric);
    const deltas = segmentDeltas(this.comparison, this.dumpA, column);
    const tests = new Map((await segmentSignificance(this.comparison, this.dumpA, column, m)).map((t) => [t.value, t]));
    return {
      column,
      metric: this.comparison.metrics[m]!.key,
      rows: deltas.rows.map((row) => {
        const d = row.metrics[m]!;
        const t = tests.get(row.value);
        return {
          value: row.value,
          queries: row.queries,
          skipped: row.queries - d.paired,
          meanA: toMaybe(d.meanA),
          meanB: toMaybe(d.meanB),
          delta: toMaybe(d.meanDelta),
          wins: d.wins,
          ties: d.ties,
          losses: d.losses,
          intervalLow: toMaybe(t?.interval.low ?? NaN),
          intervalHigh: toMaybe(t?.interval.high ?? NaN),
          tTestP: toMaybe(t?.tTest.p ?? NaN),
          randomizationP: toMaybe(t?.randomization.p ?? NaN),
        };
      }),
    };
  }

  private row(i: number, m: number, index: number): CompareRow {
    const { perQuery, options } = this.comparison;
    const delta = perQuery.delta[m]![i]!;
    return {
      query: this.dumpA.queries.get(perQuery.queryA[i]!),
      index,
      a: toMaybe(perQuery.a[m]![i]!),
      b: toMaybe(perQuery.b[m]![i]!),
      delta: toMaybe(delta),
      outcome: outcomeOf(delta, options.tieTolerance),
    };
  }

  private filtered(m: number, params: ComparePageParams): Uint32Array {
    const { perQuery, options } = this.comparison;
    const n = perQuery.queryA.length;
    const needle = (params.filter ?? '').trim().toLowerCase();
    let segment: Uint32Array | undefined;
    let wanted = -1;
    if (params.segment) {
      const column = this.dumpA.segments.find((s) => s.name === params.segment!.column);
      if (!column) throw new Error(`no segment column '${params.segment.column}'`);
      wanted = column.values.find(params.segment.value);
      if (wanted < 0) return new Uint32Array(0);
      segment = this.segmentValues(params.segment.column);
    }
    const keep = new Uint32Array(n);
    let count = 0;
    for (let i = 0; i < n; i++) {
      if (segment && segment[i] !== wanted) continue;
      if (params.outcome && outcomeOf(perQuery.delta[m]![i]!, options.tieTolerance) !== params.outcome) continue;
      if (needle && !this.dumpA.queries.get(perQuery.queryA[i]!).toLowerCase().includes(needle)) continue;
      keep[count++] = i;
    }
    return keep.slice(0, count);
  }

  /** Segment value (interned in A) of each common query: the value on its first row in A. */
  private segmentValues(column: string): Uint32Array {
    let cached = this.segmentOfPair.get(column);
    if (cached) return cached;
    const segment = this.dumpA.segments.find((s) => s.name === column)!;
    const groups = groupByQuery(this.dumpA);
    const queryA = this.comparison.perQuery.queryA;
    cached = Uint32Array.from(queryA, (q) => segment.ofRow[rowOf(groups, groups.start[q]!)]!);
    this.segmentOfPair.set(column, cached);
    return cached;
  }

  private sorted(ids: Uint32Array, m: number, sort: SortSpec): Uint32Array {
    const { perQuery } = this.comparison;
    const sign = sort.descending ? -1 : 1;
    if (sort.key === 'query') {
      const name = (i: number) => this.dumpA.queries.get(perQuery.queryA[i]!);
      return Uint32Array.from([...ids].sort((x, y) => sign * collator.compare(name(x), name(y)) || x - y));
    }
    const column = sort.key === 'a' ? perQuery.a[m]! : sort.key === 'b' ? perQuery.b[m]! : sort.key === 'delta' ? perQuery.delta[m]! : undefined;
    if (!column) throw new Error(`unknown sort key '${sort.key}' (use delta, a, b or query)`);
    return ids.sort((x, y) => {
      const u = column[x]!;
      const v = column[y]!;
      const uMissing = !Number.isFinite(u);
      const vMissing = !Number.isFinite(v);
      if (uMissing || vMissing) return uMissing === vMissing ? x - y : uMissing ? 1 : -1;
      return u === v ? x - y : u < v ? -sign : sign;
    });
  }
}
