/**
 * The sentences behind the tooltips: how each number on screen was computed. Kept beside the
 * formatting so a new metric cannot appear without its explanation (the fallback says so plainly).
 */

/** Splits 'ndcg@10' into its name and cut-off. */
export function parseMetricKey(key: string): { name: string; k: number | undefined } {
  const at = key.indexOf('@');
  if (at < 0) return { name: key.toLowerCase(), k: undefined };
  const k = Number(key.slice(at + 1));
  return { name: key.slice(0, at).toLowerCase(), k: Number.isInteger(k) && k > 0 ? k : undefined };
}

/** How one metric is computed for one query, in one or two sentences. */
export function explainMetric(key: string, conventionsSummary: string): string {
  const { name, k } = parseMetricKey(key);
  const depth = k === undefined ? 'the whole list' : `the top ${k}`;
  const base = ((): string => {
    switch (name) {
      case 'ndcg':
        return `DCG over ${depth} divided by the DCG of the ideal order over ${depth}. DCG = Σ gain(grade) / log2(position + 1) (Järvelin & Kekäläinen 2002).`;
      case 'dcg':
        return `Σ gain(grade) / log2(position + 1) over ${depth}, not normalised.`;
      case 'err':
        return `Expected reciprocal rank over ${depth}: Σ (1/r) · R_r · Π_{i<r}(1 − R_i), R = (2^g − 1) / 2^gmax (Chapelle et al. 2009).`;
      case 'p':
        return `Share of ${depth} that is relevant (grade ≥ the relevance threshold).`;
      case 'r':
        return `Share of the query's relevant items found in ${depth}.`;
      case 'ap':
        return `Average precision: mean of precision at the position of each relevant item, over all relevant items.`;
      case 'rr':
        return `Reciprocal rank: 1 / position of the first relevant item (0 when none is ranked).`;
      case 'rbp':
        return `Rank-biased precision: (1 − p) · Σ rel_i · p^(i−1), p = the persistence (Moffat & Zobel 2008).`;
      case 'tau':
        return `Kendall's tau between the order by score and the order by grade (1 = same order, −1 = reversed).`;
      default:
        return `Metric '${key}' (no description available).`;
    }
  })();
  return `${base}\nConventions: ${conventionsSummary}.`;
}

/** Label as users write it in papers: NDCG@10, P@5, AP. */
export function metricLabel(key: string): string {
  const { name, k } = parseMetricKey(key);
  const upper = name === 'tau' ? "Kendall's τ" : name.toUpperCase();
  return k === undefined ? upper : `${upper}@${k}`;
}

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
