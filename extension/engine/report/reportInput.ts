/**
 * What every report format needs: the evaluation plus the few facts about the dump it came from
 * (query names live in the dump's string pool, not in the evaluation).
 */
import type { Conventions, GainConvention } from '../metrics/conventions';
import { isPairMeasure, residualMetricIndex, type MetricSpec } from '../metrics/registry';
import type { Evaluation, PerQueryColumns } from '../evaluate/types';
import type { StringPool } from '../model/stringPool';
import type { QueryFacts } from '../tables/queryFacts';

// Text formats live in the presentation module, shared with the editor; re-exported for the reports.
export { describeConventions } from '../../presentation/conventionsLine';
export { formatValue } from '../../presentation/numbers';

export interface ReportInput {
  readonly evaluation: Evaluation;
  /** Query names by interned id (the dump's `queries`). */
  readonly queryNames: StringPool;
  /** The file that was read, as the user named it. */
  readonly source: string;
  readonly rowCount: number;
  /** Query text and segments, when a queries table was joined (tables/queryFacts.ts). */
  readonly facts?: QueryFacts;
}

/** Extra per-query columns shown next to a metric: RBP's residual, tau's inversion count. */
export interface QueryColumn {
  readonly key: string;
  /** Value for one query id; NaN when not defined. */
  readonly valueOf: (query: number) => number;
  /** Counts are shown without decimals. */
  readonly whole?: boolean;
}

/** A per-query column of reports, after `items` and `relevant`, keyed as in the summary. */
export interface RecordColumn {
  readonly key: string;
  readonly values: ArrayLike<number>;
  /** Counts are shown without decimals. */
  readonly whole?: boolean;
}

/** Metric columns in request order, each followed by its companion column (RBP's residual, tau's inversions). */
export function recordColumns(metrics: readonly MetricSpec[], perQuery: PerQueryColumns): RecordColumn[] {
  const columns: RecordColumn[] = [];
  // The evaluation keeps the residual of the first RBP metric only.
  const firstRbp = residualMetricIndex(metrics);
  metrics.forEach((spec, m) => {
    columns.push({ key: spec.key, values: perQuery.values[m]! });
    if (m === firstRbp && perQuery.rbpResidual) columns.push({ key: `${spec.key}_residual`, values: perQuery.rbpResidual });
    if (isPairMeasure(spec)) columns.push({ key: 'inversions', values: perQuery.inversions, whole: true });
  });
  return columns;
}

/** recordColumns of an evaluation, each read through `valueOf`. */
export function queryColumns(evaluation: Evaluation): QueryColumn[] {
  return recordColumns(evaluation.metrics, evaluation.perQuery).map(({ key, values, whole }) => ({ key, valueOf: (q) => values[q]!, whole }));
}

/**
 * Query ids ordered worst first by the headline metric. Skipped queries and undefined values are
 * left out; equal values keep query id order so the listing is stable between runs.
 */
export function worstQueries(evaluation: Evaluation, limit: number): number[] {
  const values = evaluation.perQuery.values[evaluation.headline]!;
  const skipped = evaluation.perQuery.skipped;
  return lowestIds(evaluation.queryCount, values, limit, (q) => !skipped[q] && !Number.isNaN(values[q]!));
}

/**
 * The `limit` ids q < count that `keep` accepts with the lowest key[q], lowest first, equal keys in id order:
 * what sorting them all and taking the first `limit` gives, through a heap of `limit` ids (sorting a million
 * queries to list ten took half a second).
 */
export function lowestIds(count: number, key: ArrayLike<number>, limit: number, keep: (q: number) => boolean): number[] {
  const size = Math.max(0, Math.floor(limit));
  // A max-heap of the kept ids: its root is the one the next candidate must beat.
  const heap: number[] = [];
  const above = (a: number, b: number) => key[a]! > key[b]! || (!(key[a]! < key[b]!) && a > b);
  const siftDown = (at: number) => {
    for (;;) {
      const l = 2 * at + 1;
      const r = l + 1;
      let top = at;
      if (l < heap.length && above(heap[l]!, heap[top]!)) top = l;
      if (r < heap.length && above(heap[r]!, heap[top]!)) top = r;
      if (top === at) return;
      [heap[at], heap[top]] = [heap[top]!, heap[at]!];
      at = top;
    }
  };
  if (size === 0) return [];
  for (let q = 0; q < count; q++) {
    if (!keep(q)) continue;
    if (heap.length < size) {
      heap.push(q);
      for (let at = heap.length - 1; at > 0;) {
        const parent = (at - 1) >> 1;
        if (!above(heap[at]!, heap[parent]!)) break;
        [heap[at], heap[parent]] = [heap[parent]!, heap[at]!];
        at = parent;
      }
    } else if (above(heap[0]!, q)) {
      heap[0] = q;
      siftDown(0);
    }
  }
  return heap.sort((a, b) => (above(a, b) ? 1 : above(b, a) ? -1 : 0));
}

/** A worst-first order other than the headline's (the command line's --sort). */
export interface WorstOrder {
  /** Query ids, worst first, as many as the report lists; queries without a value are left out. */
  readonly ids: readonly number[];
  /** What the order is by, for the heading: "inversion cost". */
  readonly label: string;
  /** A column to show beside the metrics when it is not one of them (loss share, inversion cost). */
  readonly column?: QueryColumn;
}

/** A plain-data form of the conventions for JSON output (maps become objects). */
export function conventionsAsJson(c: Conventions): Record<string, unknown> {
  return {
    gain: gainAsJson(c.gain),
    ties: c.ties,
    noRelevant: c.noRelevant,
    relevantFrom: c.relevantFrom,
    maxGrade: c.maxGrade ?? null,
    rbpPersistence: c.rbpPersistence,
    ...(c.missingQueries !== undefined ? { missingQueries: c.missingQueries } : {}),
  };
}

function gainAsJson(g: GainConvention): unknown {
  if (g.kind !== 'map') return g.kind;
  const gains: Record<string, number> = {};
  for (const [grade, gain] of [...g.gains].sort((a, b) => a[0] - b[0])) gains[String(grade)] = gain;
  return { map: gains };
}

/** NaN and infinities are not JSON; they become null. */
export function jsonNumber(x: number): number | null {
  return Number.isFinite(x) ? x : null;
}
