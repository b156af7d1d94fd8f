/**
 * The small view models that both the single-run and the compare-mode messages use. Kept apart so
 * that `messages.ts` and `compareMessages.ts` each build on this file instead of on each other.
 * Re-exported by `messages.ts`; import from there.
 */

/** A number that may be undefined for this query/segment (skipped, no data). */
export type MaybeNumber = number | null;

export interface FileInfo {
  /** Absolute path on disk. */
  readonly path: string;
  /** Base name for titles. */
  readonly name: string;
  /** 'csv' | 'tsv' | 'jsonl' | 'run' | 'sparse' | 'parquet'. */
  readonly format: string;
  readonly rowCount: number;
  readonly sizeBytes: number;
  /** False for Parquet and compressed files: "reveal in file" cannot show a text line. */
  readonly textual: boolean;
}

/** The conventions as shown to people, plus the structured values. */
export interface ConventionsView {
  /** "exponential (2^g − 1)", "linear (g)", "map 0→0, 1→1, 2→3". */
  readonly gain: string;
  readonly ties: 'average' | 'pessimistic' | 'optimistic' | 'file-order';
  readonly noRelevant: 'skip' | 'zero' | 'one';
  readonly relevantFrom: number;
  readonly maxGrade: MaybeNumber;
  readonly rbpPersistence: number;
  /** One line for tooltips and exports: "gain exponential · ties average · no-relevant skip · relevant ≥ 1". */
  readonly summary: string;
}

/** Sort keys besides any metric key from `OverviewModel.metrics`. */
export type SpecialSortKey =
  | 'query'
  | 'items'
  | 'relevant'
  | 'inversions'
  | 'inversionCost'
  /** (1 − NDCG_q) / Σ(1 − NDCG) over counted queries: the query's share of the total loss. */
  | 'lossShare';

export interface SortSpec {
  /** A metric key ('ndcg@10') or a special key. */
  readonly key: string;
  readonly descending: boolean;
}

export interface SegmentFilter {
  readonly column: string;
  readonly value: string;
}
