/**
 * Result shapes of evaluating one dump. Columnar like the dump itself: one typed array per metric,
 * indexed by query id (the dump's interned query id), so 100k queries cost a few arrays.
 */
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import type { JudgmentsJoin } from '../model/dump';

/** Degenerate data, counted and reported with what was done about it. */
export interface DegenerateCounts {
  /** Queries with exactly one item (every ranking metric is trivial for them; kept). */
  singleItemQueries: number;
  /** Queries with no judged item of grade >= relevantFrom, retrieved or not (handled by the no-relevant policy). */
  noRelevantQueries: number;
  /** Extra rows for a (query, item) pair already seen; the first row is kept, the rest are not ranked. */
  duplicateRows: number;
  /** Rows whose score is missing or non-finite; ranked after every scored item, in file order. */
  missingScoreRows: number;
  /** Rows without a judgment (run files); counted as grade 0. */
  unjudgedRows: number;
  /** Rows whose score ties another row's score in the same query. */
  tiedScoreRows: number;
}

export interface PerQueryColumns {
  /** Items ranked for the query (after dropping duplicate rows). */
  readonly items: Uint32Array;
  /** Judged items with grade >= relevantFrom, retrieved or not. */
  readonly relevant: Uint32Array;
  /** Judged items the run never retrieved (0 unless labels came from a judgments file). */
  readonly unretrieved?: Uint32Array;
  /** One array per requested metric, same order as `metrics`; NaN where the query is skipped. */
  readonly values: readonly Float64Array[];
  /** Discordant pairs: strictly lower score but strictly higher grade. */
  readonly inversions: Float64Array;
  /** Sum over inverted pairs of the NDCG (at the headline cut-off) a swap would recover (Burges 2010). */
  readonly inversionCost: Float64Array;
  /** 1 when the query is skipped from means (no relevant item under the `skip` policy). */
  readonly skipped: Uint8Array;
  /** RBP residual of the first `rbp` metric (Moffat & Zobel 2008); present only when RBP is requested. */
  readonly rbpResidual?: Float64Array;
}

export interface MetricSummary {
  readonly key: string;
  /** Mean over counted queries (NaN when none). */
  readonly mean: number;
  /** Queries that entered the mean. */
  readonly counted: number;
}

/** The headline NDCG@k of the same run under one alternative convention. */
export interface SensitivityRow {
  /** Human-readable label: "gain: linear", "ties: pessimistic", "no relevant: zero", ... */
  readonly label: string;
  readonly conventions: Conventions;
  readonly mean: number;
  readonly counted: number;
  /** Why the row has no mean, when the convention cannot score this data (e.g. a gain beyond a double). */
  readonly unavailable?: string;
}

export interface Evaluation {
  readonly conventions: Conventions;
  readonly metrics: readonly MetricSpec[];
  /** Index into `metrics` of the headline metric (the first one requested). */
  readonly headline: number;
  readonly queryCount: number;
  readonly perQuery: PerQueryColumns;
  /** summary[i] belongs to metrics[i]; when RBP is requested one more entry follows, keyed `rbp_residual`. */
  readonly summary: readonly MetricSummary[];
  /** Present when the means are weighted by query (a weight column in the dump or the queries table). */
  readonly weighting?: { readonly source: string };
  readonly degenerate: DegenerateCounts;
  readonly sensitivity: readonly SensitivityRow[];
  /** Plain sentences for people: what was counted, skipped or assumed. */
  readonly warnings: readonly string[];
  /** How labels were joined from a judgments file (absent when the dump had its own labels only). */
  readonly judgments?: JudgmentsJoin;
}

/** One position of one query's ranked list, as shown in the detail view. */
export interface PositionRow {
  /** 1-based position in the predicted order (under `file-order`/`pessimistic`/`optimistic` ties the
   * realised order; under `average`, the file order within each tied group). */
  readonly position: number;
  /** Row index in the dump (for "reveal in file"). */
  readonly row: number;
  readonly item: string;
  readonly label: number;
  readonly score: number;
  readonly gain: number;
  /** The discount applied: 1/log2(position+1), or the tie group's average discount under `average`. */
  readonly discount: number;
  /** gain × the discount applied at the cut-off k (0 beyond it). Under `average`, a tied group that straddles
   * the cut-off applies its mean truncated discount to every member, so contributions add up to the expected
   * DCG@k even though some members sit below position k. */
  readonly contribution: number;
  readonly cumulativeDcg: number;
  /** Ideal cumulative DCG at the same position. */
  readonly idealCumulativeDcg: number;
  /** 1-based position of this item in the ideal order. */
  readonly idealPosition: number;
  /** Size of this item's tied-score group (1 when not tied). */
  readonly tieGroupSize: number;
}

/** A judged item that the run never retrieved: it has an ideal place but no predicted one. */
export interface NotRetrievedItem {
  readonly item: string;
  readonly label: number;
  readonly gain: number;
  /** 1-based position in the ideal ranking of every judged item of the query. */
  readonly idealPosition: number;
}

export interface InvertedPair {
  /** Row of the item ranked higher by score but graded lower. */
  readonly aboveRow: number;
  /** Row of the item ranked lower by score but graded higher. */
  readonly belowRow: number;
  readonly abovePosition: number;
  readonly belowPosition: number;
  /** |ΔNDCG@k| from swapping the two (Burges 2010, LambdaRank's |ΔNDCG|). */
  readonly ndcgRecovered: number;
}

export interface QueryDetail {
  readonly query: string;
  readonly conventions: Conventions;
  readonly k: number;
  readonly positions: readonly PositionRow[];
  /**
   * The listed items in ideal order (grade descending, the model's order within a grade). Rows refer to the dump.
   * Their places in the whole ideal ranking, which also holds `notRetrieved`, are the positions' `idealPosition`.
   */
  readonly idealOrder: readonly number[];
  /** Judged items of the query that the list lacks, by ideal position (empty unless labels came from a judgments file). */
  readonly notRetrieved: readonly NotRetrievedItem[];
  readonly dcg: number;
  readonly idealDcg: number;
  readonly ndcg: number;
  /** Sorted by ndcgRecovered descending; capped (see `invertedPairsTotal`). */
  readonly invertedPairs: readonly InvertedPair[];
  readonly invertedPairsTotal: number;
  /** Metric values for this query, keyed like the summary. */
  readonly values: Readonly<Record<string, number>>;
}
