/**
 * The shape of one metric's definition in the registry (registry.ts), and what the scorer hands a
 * metric's compute function. Kept apart from the registry so the entries and the scorer can both
 * depend on it without depending on each other.
 */
import type { Conventions } from './conventions';
import type { ErrCalculator } from './err';
import type { GroupedList } from './listMetrics';
import type { PairResult } from './pairs';

/** The conventions a metric's value depends on (besides the tie convention, which every metric follows). */
export type ConventionNeed = 'gain' | 'relevantFrom' | 'maxGrade' | 'rbpPersistence' | 'noRelevant';

/**
 * One query, scored: the arranged list (ties grouped or ordered by the tie convention) and what the
 * scorer has already worked out for it. Implemented by QueryScorer.
 */
export interface MetricContext {
  readonly conventions: Conventions;
  /** The ranked list, cut into tie groups (one item per group unless ties are averaged). */
  readonly list: GroupedList;
  /** Gain per arranged slot (gain convention applied). */
  readonly gain: Float64Array;
  /** Relevant judged items of the query (grade >= relevantFrom), retrieved or not (see scorer.ts). */
  readonly relevant: number;
  /** Ideal DCG at cut-off k from every judged item of the query, retrieved or not. */
  idealDcg(k: number): number;
  /** ERR's stop probability per arranged slot (filled on first use for each query). */
  errStops(): Float64Array;
  readonly err: ErrCalculator;
  /** Kendall's tau and the inversion count, filled before any metric is computed. */
  readonly pairs: PairResult;
  /** Scratch for metrics with a second figure (RBP's residual); read by the scorer after compute. */
  readonly second: Float64Array;
}

export interface MetricDefinition {
  /** The key stem users write: `ndcg` in `ndcg@10`. Lower case letters only. */
  readonly name: string;
  /** `optional`: `name` (whole list) or `name@k`; `none`: `name` only. */
  readonly cutoff: 'optional' | 'none';
  /** What k means in `name@k` (help text): 'k' (a cut-off) or 'depth'. */
  readonly cutoffWord?: string;
  /**
   * Normalised by what the query could have achieved: a query with no relevant item scores the
   * no-relevant policy's value (0, 1, or skipped) instead of what its grades give.
   */
  readonly normalised: boolean;
  /** As written in papers and on screen: NDCG, P, Kendall's τ. The cut-off is appended as @k. */
  readonly label: string;
  /** The values the metric can take, [low, high]; undefined when unbounded above (DCG). Sets chart axes. */
  readonly range?: readonly [number, number];
  /** One line for tooltips and the README; `depth` is "the top 10" or "the whole list". */
  readonly explain: (depth: string) => string;
  readonly formula: string;
  /** Published source, or "common practice". */
  readonly reference: string;
  /** What ties and an empty list give (doc and README). */
  readonly ties: string;
  readonly needs: readonly ConventionNeed[];
  /** Writes a second per-query figure (RBP's residual) into `context.second[0]`; the first such metric's is kept. */
  readonly residual?: boolean;
  /** A pair measure: the inversion count column follows it in reports. */
  readonly pairMeasure?: boolean;
  /** Why a query that is not skipped can have no value (the report's note), when it can. */
  readonly undefinedWhen?: string;
  /** A note for the report's notes when the metric is asked for with cut-off k (a choice users must know). */
  readonly note?: (key: string, k: number | undefined) => string | undefined;
  /** The value for one query at cut-off k (Infinity = whole list), before the no-relevant policy. */
  readonly compute: (context: MetricContext, k: number) => number;
}
