/**
 * Compare-mode view models of the protocol (two runs of the same queries). Re-exported by
 * `messages.ts`; import from there.
 */
import type { ConventionsView, FileInfo, MaybeNumber, SegmentFilter, SortSpec } from './viewBasics';
// Type-only: erased from the webview bundle, which still never loads engine code.
import type { PairChange as PairChangeView, PositionChange as PositionChangeView } from '../engine/compare/movement';

/** The engine's pair and position changes are plain JSON already (strings and finite numbers). */
export type { PairChangeView, PositionChangeView };

export type RunSide = 'a' | 'b';

export interface SignificanceView {
  /** 'paired t-test', 'Wilcoxon signed-rank', 'randomization (paired permutation)'. */
  readonly test: string;
  readonly statistic: MaybeNumber;
  readonly pValue: MaybeNumber;
  /** Holm-adjusted p over the metrics tested (null when not adjusted). */
  readonly adjustedP: MaybeNumber;
}

/** Paired means over a set of common queries, and how many queries B won, tied and lost. */
export interface PairedOutcome {
  readonly meanA: MaybeNumber;
  readonly meanB: MaybeNumber;
  /** meanB − meanA. */
  readonly delta: MaybeNumber;
  readonly wins: number;
  readonly ties: number;
  readonly losses: number;
}

export interface CompareMetricRow extends PairedOutcome {
  readonly key: string;
  readonly label: string;
  readonly tests: readonly SignificanceView[];
  /** 95% interval of the mean delta, when computed. */
  readonly intervalLow: MaybeNumber;
  readonly intervalHigh: MaybeNumber;
}

export interface CompareOverviewModel {
  readonly runA: FileInfo;
  readonly runB: FileInfo;
  readonly conventions: ConventionsView;
  /** Index into `metrics` of the headline. */
  readonly headline: number;
  readonly metrics: readonly CompareMetricRow[];
  /** Queries present in both runs (the paired set). */
  readonly pairedQueries: number;
  readonly onlyInA: number;
  readonly onlyInB: number;
  /** |delta| ≤ this counts as a tie. */
  readonly tieTolerance: number;
  readonly segmentColumns: readonly string[];
  readonly warnings: readonly string[];
  readonly loadMs: number;
}

export type Outcome = 'win' | 'tie' | 'loss';

export interface ComparePageParams {
  /** Keys: 'delta' (default, ascending = biggest losses first), 'a', 'b', 'query'. */
  readonly sort?: SortSpec;
  readonly filter?: string;
  readonly outcome?: Outcome;
  readonly segment?: SegmentFilter;
  /** Metric compared (default the headline). */
  readonly metric?: string;
  readonly offset: number;
  readonly limit: number;
}

export interface CompareRow {
  readonly query: string;
  readonly index: number;
  readonly a: MaybeNumber;
  readonly b: MaybeNumber;
  /** b − a. */
  readonly delta: MaybeNumber;
  readonly outcome: Outcome | null;
}

export interface ComparePage {
  readonly total: number;
  readonly offset: number;
  readonly metric: string;
  readonly rows: readonly CompareRow[];
}

export interface MovementParams {
  readonly query: string;
}

/** The engine's ItemMove with null instead of NaN or position 0, and one grade instead of two. */
export interface MovementRow {
  readonly item: string;
  /** Grade (B's when the item is in B, else A's). */
  readonly label: MaybeNumber;
  /** 1-based; null when the item is absent from that run. */
  readonly positionA: MaybeNumber;
  readonly positionB: MaybeNumber;
  /** positionA − positionB (positive = moved up in B); null when absent from one run. */
  readonly moved: MaybeNumber;
}

/** The engine's QueryMovement as plain JSON: null for undefined NDCG, pair lists capped for the message. */
export interface MovementView {
  readonly query: string;
  /** Headline cut-off. */
  readonly k: number;
  /** Headline NDCG of the query in A and B. */
  readonly a: MaybeNumber;
  readonly b: MaybeNumber;
  readonly dcgA: number;
  readonly dcgB: number;
  /** Items in B's order, then items only A ranks. */
  readonly rows: readonly MovementRow[];
  /** Inverted in A, fixed in B (capped at 500; totals below are exact). */
  readonly fixedPairs: readonly PairChangeView[];
  /** Inverted in B, not in A (capped at 500). */
  readonly introducedPairs: readonly PairChangeView[];
  readonly fixedTotal: number;
  readonly introducedTotal: number;
  readonly keptPairs: number;
  readonly droppedPairs: number;
  readonly invertedTotalA: number;
  readonly invertedTotalB: number;
  readonly pairsTruncated: boolean;
  /** Positions 1..k: what each run put there and the DCG contribution change. */
  readonly positions: readonly PositionChangeView[];
}

export interface CompareSegmentsParams {
  readonly column: string;
  readonly metric?: string;
}

export interface CompareSegmentRow extends PairedOutcome {
  readonly value: string;
  /** Queries of the segment in both runs. */
  readonly queries: number;
  /** Of those, left out of the metric's comparison (undefined in A or B: nothing relevant, skipped). */
  readonly skipped: number;
  /** 95% percentile-bootstrap interval of the segment's mean Δ, as in the main table. */
  readonly intervalLow: MaybeNumber;
  readonly intervalHigh: MaybeNumber;
  /** Two-sided p of the paired t-test and of the randomization test on the segment's differences. */
  readonly tTestP: MaybeNumber;
  readonly randomizationP: MaybeNumber;
}

export interface CompareSegmentTable {
  readonly column: string;
  readonly metric: string;
  readonly rows: readonly CompareSegmentRow[];
}
