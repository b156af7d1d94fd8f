/**
 * The conventions every number depends on. They are explicit, configurable, and printed beside
 * every result, because the same run scores differently under each (the usual reason two teams'
 * NDCG@10 disagree).
 */

/** How a grade becomes a gain. `map` gives an explicit gain per grade (grades not listed are an error). */
export type GainConvention =
  | { readonly kind: 'exponential' } // 2^g - 1 (common practice; Burges et al. 2005)
  | { readonly kind: 'linear' } // g (as in Järvelin & Kekäläinen 2002)
  | { readonly kind: 'map'; readonly gains: ReadonlyMap<number, number> };

/**
 * How items with equal scores are ordered.
 * - average: the expected value over all orderings of each tied group (McSherry & Najork 2008). Default.
 * - pessimistic: within a tie, lower grades first (worst case).
 * - optimistic: within a tie, higher grades first (best case).
 * - file-order: within a tie, the order rows appear in the file (stable sort).
 */
export type TieConvention = 'average' | 'pessimistic' | 'optimistic' | 'file-order';

/**
 * What a query with no relevant item scores on metrics normalised by the ideal (NDCG, AP, RR, recall, ERR
 * normalised variants): skip it from means (default; counted and reported), score 0, or score 1.
 */
export type NoRelevantPolicy = 'skip' | 'zero' | 'one';

/** Items with a NaN score are placed after all scored items, in file order (counted and reported). */
export interface Conventions {
  readonly gain: GainConvention;
  readonly ties: TieConvention;
  readonly noRelevant: NoRelevantPolicy;
  /** Binary relevance threshold: grade >= relevantFrom is relevant. Default 1. */
  readonly relevantFrom: number;
  /** ERR's g_max; when undefined the highest grade in the data is used. */
  readonly maxGrade?: number;
  /** RBP persistence p in (0, 1). Default 0.8. */
  readonly rbpPersistence: number;
}

export const DEFAULT_CONVENTIONS: Conventions = {
  gain: { kind: 'exponential' },
  ties: 'average',
  noRelevant: 'skip',
  relevantFrom: 1,
  rbpPersistence: 0.8,
};

/** Metric names as the user writes them: `ndcg@10`, `dcg@10`, `err@10`, `p@5`, `r@10`, `ap`, `rr`, `rbp`, `tau`. */
export type MetricName = 'ndcg' | 'dcg' | 'err' | 'p' | 'r' | 'ap' | 'rr' | 'rbp' | 'tau';

export interface MetricSpec {
  readonly name: MetricName;
  /** Cut-off depth; undefined means the whole list. */
  readonly k?: number;
  /** The key used in outputs, exactly as written: `ndcg@10`, `ap`, ... */
  readonly key: string;
}

export const DEFAULT_METRICS = 'ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau';
