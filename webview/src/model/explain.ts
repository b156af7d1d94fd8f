/**
 * The sentences behind the tooltips: how each number on screen was computed. A metric's own sentence
 * comes from its registry entry, so a new metric cannot appear without its explanation.
 */

// Metric labels and explanations come from the metric registry through the presentation module.
export { explainMetric, metricLabel } from '../../../extension/presentation/metricText';

export const COLUMN_EXPLANATIONS: Readonly<Record<string, string>> = {
  query: 'Query id as written in the file.',
  items: 'Items ranked for the query (duplicate rows dropped).',
  relevant: 'Items with grade ≥ the relevance threshold.',
  inversions: 'Discordant pairs: an item scored strictly lower than another yet graded strictly higher.',
  inversionCost: 'Sum over the inverted pairs of the NDCG a swap of the two items would recover (|ΔNDCG| as in Burges 2010).',
  lossShare: '(1 − NDCG of this query) divided by Σ (1 − NDCG) over all counted queries: how much of the total shortfall this query carries.',
  delta: 'B − A for this query (positive: B is better).',
  a: 'Value of the metric in run A.',
  b: 'Value of the metric in run B.',
  queries: 'Queries with this value in the chosen column.',
  headlineDelta: 'Segment mean of the headline metric minus the overall mean.',
  wins: 'Queries where B − A is above the tie tolerance.',
  ties: 'Queries where |B − A| is within the tie tolerance.',
  losses: 'Queries where B − A is below minus the tie tolerance.',
  gain: 'Gain of the grade under the gain convention (exponential 2^g − 1 or linear g).',
  discount: '1 / log2(position + 1); under tie averaging, the mean discount of the tied group (McSherry & Najork 2008).',
  contribution: 'gain × discount; zero beyond the cut-off.',
  cumulative: 'DCG accumulated down to this position, and the ideal order’s DCG at the same depth.',
  ndcgRecovered: 'NDCG this query would gain if the two items swapped places (|ΔNDCG|, Burges 2010).',
  moved: 'Position in A minus position in B: positive means B ranks the item higher.',
};

/** What each degenerate-data count means and what was done about it. */
export const DEGENERATE_EXPLANATIONS: Readonly<Record<string, { label: string; handling: string }>> = {
  singleItemQueries: { label: 'Queries with a single item', handling: 'Kept; every ranking metric is trivial for them.' },
  noRelevantQueries: { label: 'Queries with nothing relevant', handling: 'Handled by the no-relevant policy shown above (skip, zero or one).' },
  duplicateRows: { label: 'Duplicate (query, item) rows', handling: 'First row kept; the rest are not ranked.' },
  missingScoreRows: { label: 'Rows with a missing or non-finite score', handling: 'Ranked after every scored item, in file order.' },
  unjudgedRows: { label: 'Rows without a judgment', handling: 'Counted as grade 0.' },
  tiedScoreRows: { label: 'Rows whose score ties another in the same query', handling: 'Ordered by the tie convention shown above.' },
};
