/**
 * A model's checkpoints over training: per checkpoint the mean of each metric with a bootstrap
 * interval, per query its trajectory, the queries that got worst, and where each metric peaked.
 *
 * Memory: a series can be long (50 checkpoints of 100k rows), so a checkpoint's dump is never kept.
 * `add` takes its evaluation and query names, copies the per-query metric values into columns indexed
 * by a series-wide query id, and the caller drops the dump and the evaluation.
 *
 * Query sets: checkpoints of one job should score the same queries. When they do not, nothing is
 * intersected: each checkpoint's mean is over its own queries, trajectories have gaps (NaN), and the
 * differences are reported per checkpoint as counts with examples; the first-to-last and peak-to-last
 * drops cover the queries scored at the checkpoints involved, and those left out are counted.
 */
import { bootstrapMeanIntervals, type Interval } from '../compare/bootstrap';
import type { Evaluation } from '../evaluate/types';
import type { MetricSpec } from '../metrics/registry';
import { SeriesQueryIds } from './queryIds';

const EXAMPLES = 5;

export interface CheckpointSummary {
  readonly run: string;
  /** The checkpoint number or modification time the series was ordered by. */
  readonly position: number;
  readonly queries: number;
  /** Per metric: mean over the checkpoint's counted queries, its 95% percentile-bootstrap interval, queries counted. */
  readonly means: readonly number[];
  readonly intervals: readonly Interval[];
  readonly counted: readonly number[];
}

export interface QuerySetDifference {
  readonly run: string;
  /** Queries of the series (any checkpoint) this checkpoint lacks. */
  readonly missing: number;
  readonly missingExamples: readonly string[];
}

export interface QueryDrop {
  readonly query: string;
  /** Series-wide query id (row of the trajectories). */
  readonly id: number;
  readonly from: number;
  /** Checkpoint index of `from` (0 for first-to-last, the peak for peak-to-last). */
  readonly fromCheckpoint: number;
  readonly last: number;
  readonly delta: number;
}

export interface Trend {
  readonly metrics: readonly MetricSpec[];
  readonly checkpoints: readonly CheckpointSummary[];
  /**
   * Series-wide query names. trajectories[m] is a query × checkpoint matrix, row-major: the value of
   * query q at checkpoint k is at q·checkpoints.length + k (NaN where absent or skipped).
   */
  readonly queryNames: readonly string[];
  readonly trajectories: readonly Float64Array[];
  /** Per metric, the checkpoint index with the highest mean (earliest on equal means). */
  readonly peaks: readonly number[];
  /** Headline metric: most negative last − first, and last − (highest value over the series). */
  readonly worstFirstToLast: readonly QueryDrop[];
  readonly worstPeakToLast: readonly QueryDrop[];
  /** Queries with a value at both the first and last checkpoints (the first-to-last drops cover these). */
  readonly comparableFirstToLast: number;
  readonly inEveryCheckpoint: number;
  readonly querySets: readonly QuerySetDifference[];
  readonly warnings: readonly string[];
}

export interface TrendOptions {
  readonly bootstrap: number;
  readonly seed: number;
  /** How many of the worst queries to list. */
  readonly top: number;
}

/** What a trend keeps of one checkpoint: small enough to post between threads. */
export interface CheckpointColumns {
  /** The checkpoint's query names, in its query order. */
  readonly queryNames: readonly string[];
  /** Per metric, per query (same order); NaN where skipped. */
  readonly values: Float64Array[];
  /** Per metric, the evaluation's mean and counted queries. */
  readonly means: readonly number[];
  readonly counted: readonly number[];
}

/** Reduces one checkpoint's evaluation to its per-query metric columns; the dump can go afterwards. */
export function checkpointColumns(evaluation: Evaluation, queryName: (q: number) => string): CheckpointColumns {
  const n = evaluation.queryCount;
  const values = evaluation.metrics.map((_, m) => {
    const column = Float64Array.from(evaluation.perQuery.values[m]!);
    for (let q = 0; q < n; q++) if (evaluation.perQuery.skipped[q]) column[q] = Number.NaN;
    return column;
  });
  return {
    queryNames: Array.from({ length: n }, (_, q) => queryName(q)),
    values,
    means: evaluation.metrics.map((_, m) => evaluation.summary[m]!.mean),
    counted: evaluation.metrics.map((_, m) => evaluation.summary[m]!.counted),
  };
}

/**
 * Each metric's 95% interval of one checkpoint's mean. One bootstrap pass per group of metrics counted
 * on the same queries (usually all of them): the resampled queries are drawn once and feed every column,
 * as in the comparison's intervals. The seed is the same for every checkpoint, so each interval can be
 * reproduced on its own, and on whichever thread scored the checkpoint.
 */
export async function checkpointIntervals(values: readonly Float64Array[], resamples: number, seed: number): Promise<Interval[]> {
  const intervals: Interval[] = new Array(values.length);
  const groups = new Map<string, number[]>();
  values.forEach((column, m) => {
    let key = '';
    for (let q = 0; q < column.length; q++) key += Number.isFinite(column[q]!) ? '1' : '0';
    groups.set(key, [...(groups.get(key) ?? []), m]);
  });
  for (const members of groups.values()) {
    const columns = members.map((m) => values[m]!.filter(Number.isFinite));
    const found = await bootstrapMeanIntervals(columns, { resamples, seed });
    members.forEach((m, i) => (intervals[m] = found[i]!));
  }
  return intervals;
}

interface Stored {
  readonly run: string;
  readonly position: number;
  /** Series-wide query id of each of the checkpoint's queries (shared between checkpoints with the first one's queries). */
  readonly ids: Uint32Array;
  /** Per metric, the checkpoint's per-query values (NaN where skipped). */
  readonly values: Float64Array[];
  readonly summary: CheckpointSummary;
}

export class TrendBuilder {
  private readonly queryIds = new SeriesQueryIds();
  private readonly stored: Stored[] = [];

  constructor(
    readonly metrics: readonly MetricSpec[],
    private readonly options: TrendOptions,
  ) {}

  /**
   * Adds the next checkpoint of the series (in series order). `intervals`, when the lane that scored the
   * checkpoint computed them already, are checkpointIntervals of the same columns with this builder's
   * bootstrap settings.
   */
  async add(run: string, position: number, columns: CheckpointColumns, intervals?: readonly Interval[]): Promise<CheckpointSummary> {
    const n = columns.queryNames.length;
    const ids = this.queryIds.idsOf(columns.queryNames);
    const values = columns.values;
    const found = intervals ?? (await checkpointIntervals(values, this.options.bootstrap, this.options.seed));
    const summary: CheckpointSummary = { run, position, queries: n, means: columns.means, counted: columns.counted, intervals: found };
    this.stored.push({ run, position, ids, values, summary });
    return summary;
  }

  finish(): Trend {
    const queryCount = this.queryIds.all.length;
    const c = this.stored.length;
    const trajectories = this.metrics.map((_, m) => {
      const matrix = new Float64Array(queryCount * c).fill(Number.NaN);
      this.stored.forEach((s, k) => {
        for (let i = 0; i < s.ids.length; i++) matrix[s.ids[i]! * c + k] = s.values[m]![i]!;
      });
      return matrix;
    });
    const presence = new Uint32Array(queryCount);
    for (const s of this.stored) for (let i = 0; i < s.ids.length; i++) presence[s.ids[i]!]!++;
    const querySets = this.stored.map((s) => this.missingFrom(s));
    const inEveryCheckpoint = presence.filter((count) => count === c).length;
    const peaks = this.metrics.map((_, m) => {
      let best = -1;
      this.stored.forEach((s, k) => {
        const mean = s.summary.means[m]!;
        if (Number.isFinite(mean) && (best < 0 || mean > this.stored[best]!.summary.means[m]!)) best = k;
      });
      return best;
    });
    const { firstToLast, peakToLast, comparable } = this.drops(trajectories[0] ?? new Float64Array(0));
    const warnings = querySets
      .filter((d) => d.missing > 0)
      .map((d) => `${d.run} lacks ${d.missing} of the series' ${queryCount} queries (e.g. ${d.missingExamples.map((x) => JSON.stringify(x)).join(', ')}); its means are over its own queries.`);
    return {
      metrics: this.metrics,
      checkpoints: this.stored.map((s) => s.summary),
      queryNames: this.queryIds.all,
      trajectories,
      peaks,
      worstFirstToLast: firstToLast,
      worstPeakToLast: peakToLast,
      comparableFirstToLast: comparable,
      inEveryCheckpoint,
      querySets,
      warnings,
    };
  }

  private missingFrom(s: Stored): QuerySetDifference {
    const here = new Uint8Array(this.queryIds.all.length);
    for (let i = 0; i < s.ids.length; i++) here[s.ids[i]!] = 1;
    const missingExamples: string[] = [];
    let missing = 0;
    for (let q = 0; q < here.length; q++) {
      if (here[q]) continue;
      missing++;
      if (missingExamples.length < EXAMPLES) missingExamples.push(this.queryIds.all[q]!);
    }
    return { run: s.run, missing, missingExamples };
  }

  /** Headline drops. Equal drops keep series query order so listings are stable. */
  private drops(matrix: Float64Array): { firstToLast: QueryDrop[]; peakToLast: QueryDrop[]; comparable: number } {
    const firstToLast: QueryDrop[] = [];
    const peakToLast: QueryDrop[] = [];
    const c = this.stored.length;
    const lastIndex = c - 1;
    for (let id = 0; id < this.queryIds.all.length; id++) {
      const row = matrix.subarray(id * c, id * c + c);
      const last = row[lastIndex]!;
      if (!Number.isFinite(last)) continue;
      const first = row[0]!;
      if (Number.isFinite(first) && lastIndex > 0) {
        firstToLast.push({ query: this.queryIds.all[id]!, id, from: first, fromCheckpoint: 0, last, delta: last - first });
      }
      let peak = -1;
      for (let k = 0; k < lastIndex; k++) if (Number.isFinite(row[k]!) && (peak < 0 || row[k]! > row[peak]!)) peak = k;
      if (peak >= 0 && row[peak]! > last) {
        peakToLast.push({ query: this.queryIds.all[id]!, id, from: row[peak]!, fromCheckpoint: peak, last, delta: last - row[peak]! });
      }
    }
    const comparable = firstToLast.length;
    const worst = (list: QueryDrop[]) => list.filter((d) => d.delta < 0).sort((x, y) => x.delta - y.delta || x.id - y.id).slice(0, this.options.top);
    return { firstToLast: worst(firstToLast), peakToLast: worst(peakToLast), comparable };
  }
}
