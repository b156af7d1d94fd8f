/**
 * The conventions every number depends on. They are explicit, configurable, and printed beside
 * every result, because the same run scores differently under each (the usual reason two teams'
 * NDCG@10 disagree).
 */
import { DEFAULT_CONVENTION_SETTINGS } from '../../presentation/defaults';

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
 * What a query with no relevant item (no item of grade >= relevantFrom, or no rows at all) scores. With
 * labels from a judgments file the test is over every judged item of the query, retrieved or not: a query
 * whose only relevant items were never retrieved has relevant items and scores 0 on NDCG, AP, RR and recall.
 * - skip (default): the query is left out of every metric's mean (NaN in every column, `skipped` = 1) and
 *   counted, so all means of one evaluation cover the same queries.
 * - zero / one: the metrics the registry marks `normalised` (by what the query could have achieved) score
 *   0 / 1; the others keep the value their grades give (0 when no grade is positive) and are counted as usual.
 * Kendall's tau is NaN whenever it is undefined (all scores or all grades of the query equal) and then left
 * out of its mean, whatever the policy. NDCG is NaN when a query has relevant items whose gains are all 0
 * (possible only with a gain map).
 */
export type NoRelevantPolicy = 'skip' | 'zero' | 'one';

/**
 * Fixed rules, not options: items with a NaN score are placed after all scored items, in file order, never
 * tied with each other for the list metrics (for tau they form one class below every scored item); unjudged
 * rows (NaN label) count as grade 0; of duplicate (query, item) rows only the first is ranked. All counted.
 */
export interface Conventions {
  readonly gain: GainConvention;
  readonly ties: TieConvention;
  readonly noRelevant: NoRelevantPolicy;
  /** Binary relevance threshold: grade >= relevantFrom is relevant. Default 1. */
  readonly relevantFrom: number;
  /**
   * ERR's g_max; when undefined the highest grade in the data is used (with a judgments file, the highest
   * judged grade, retrieved or not: the scale belongs to the judgments, not to what one run returned).
   */
  readonly maxGrade?: number;
  /** RBP persistence p in (0, 1). Default 0.8. */
  readonly rbpPersistence: number;
  /**
   * Judged queries with no row in the run, when labels come from a judgments file: left out (`skip`, the
   * default) or scored 0 on every metric (`zero`, common practice of evaluation campaigns). Applied when the
   * judgments are joined (readers/judgments.ts); undefined when there is no judgments file. Kept here so
   * that it is printed with the other conventions.
   */
  readonly missingQueries?: 'skip' | 'zero';
}

export const DEFAULT_CONVENTIONS: Conventions = {
  gain: { kind: DEFAULT_CONVENTION_SETTINGS.gain },
  ties: DEFAULT_CONVENTION_SETTINGS.ties,
  noRelevant: DEFAULT_CONVENTION_SETTINGS.noRelevant,
  relevantFrom: DEFAULT_CONVENTION_SETTINGS.relevantFrom,
  rbpPersistence: DEFAULT_CONVENTION_SETTINGS.rbpPersistence,
};
