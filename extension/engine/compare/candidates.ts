/**
 * One baseline against several candidates. Each candidate is compared with the baseline exactly as a
 * two-run comparison would (compareRuns, same options and seed), so every unadjusted figure is the
 * one `compare BASE CANDIDATE` prints. On top of those pairwise results this module adds what only
 * makes sense across candidates: p-values adjusted over the whole family of candidates × metrics, a
 * ranking, and how the candidates' query sets differ from each other.
 */
import { benjaminiHochbergAdjust, holmAdjust } from './adjust';
import type { AdjustedP, Comparison, MetricComparison } from './compare';

export interface CandidateResult {
  /** The candidate as the user named it. */
  readonly run: string;
  readonly comparison: Comparison;
  /** 1 = best under the ranking rule. */
  readonly rank: number;
  /** Per metric (comparison order): adjusted across every candidate × metric, per test. */
  readonly adjusted: readonly MetricComparison['adjusted'][];
}

export interface CandidatesComparison {
  readonly baseline: string;
  /** In the order given. */
  readonly candidates: readonly CandidateResult[];
  /** Indices into `candidates`, best first. */
  readonly ranking: readonly number[];
  /** Baseline queries with rows that every candidate shares. */
  readonly inEveryRun: number;
  /** Baseline queries (with rows). */
  readonly baselineQueries: number;
  readonly rankingRule: string;
  readonly methodNotes: readonly string[];
}

export const RANKING_RULE =
  'Candidates are ranked by the mean Δ (candidate − baseline) of the headline metric over the queries each shares with the baseline, ' +
  'highest first; equal means keep the order given.';

/**
 * `comparisons[i]` compares the baseline (run A of every one) with candidate `runs[i]`. They must use
 * the same metrics in the same order.
 */
export function combineCandidates(baseline: string, runs: readonly string[], comparisons: readonly Comparison[]): CandidatesComparison {
  if (comparisons.length === 0 || comparisons.length !== runs.length) throw new RangeError('one comparison per candidate');
  const metricCount = comparisons[0]!.byMetric.length;
  for (const c of comparisons) {
    if (c.byMetric.length !== metricCount || c.byMetric.some((r, m) => r.key !== comparisons[0]!.byMetric[m]!.key)) {
      throw new RangeError('candidate comparisons differ in their metrics');
    }
  }
  const adjusted = adjustAcrossFamily(comparisons);
  const headline = comparisons[0]!.headline;
  const headlineDelta = comparisons.map((c) => c.byMetric[headline]!.summary.meanDifference);
  // NaN (no pairs) ranks last; the index keeps the order given for equal means.
  const ranking = runs
    .map((_, i) => i)
    .sort((x, y) => orderDescending(headlineDelta[x]!, headlineDelta[y]!) || x - y);
  const rankOf = new Array<number>(runs.length);
  ranking.forEach((candidate, position) => (rankOf[candidate] = position + 1));

  const { inEveryRun, baselineQueries } = sharedByAll(comparisons);
  const family = comparisons.length * metricCount;
  return {
    baseline,
    candidates: comparisons.map((comparison, i) => ({ run: runs[i]!, comparison, rank: rankOf[i]!, adjusted: adjusted[i]! })),
    ranking,
    inEveryRun,
    baselineQueries,
    rankingRule: RANKING_RULE,
    methodNotes: [
      ...comparisons[0]!.methodNotes.filter((n) => !n.startsWith('Holm and Benjamini–Hochberg')),
      `Holm (1979) and Benjamini–Hochberg (1995) adjustments are across the ${family} tests of ${comparisons.length} candidates × ` +
        `${metricCount} metrics, separately for the t, Wilcoxon and randomization tests.`,
      'Each candidate is tested on the queries it shares with the baseline; queries found only in the baseline or only in a ' +
        'candidate are counted per candidate and left out of that candidate\'s tests, so candidates can be tested on different query sets.',
      RANKING_RULE,
    ],
  };
}

function orderDescending(x: number, y: number): number {
  if (Number.isNaN(x) || Number.isNaN(y)) return Number(Number.isNaN(x)) - Number(Number.isNaN(y));
  return y - x;
}

/** The family is every candidate × metric; each test's p-values are adjusted on their own. */
function adjustAcrossFamily(comparisons: readonly Comparison[]): MetricComparison['adjusted'][][] {
  const pick = {
    tTest: (r: MetricComparison) => r.tTest.p,
    wilcoxon: (r: MetricComparison) => r.wilcoxon.p,
    randomization: (r: MetricComparison) => r.randomization.p,
  };
  const flat = comparisons.flatMap((c) => c.byMetric);
  const per = Object.fromEntries(
    Object.entries(pick).map(([test, p]) => {
      const ps = flat.map(p);
      return [test, { holm: holmAdjust(ps), bh: benjaminiHochbergAdjust(ps) }];
    }),
  ) as Record<keyof typeof pick, { holm: number[]; bh: number[] }>;
  const at = (test: keyof typeof pick, k: number): AdjustedP => ({ holm: per[test].holm[k]!, benjaminiHochberg: per[test].bh[k]! });
  let k = 0;
  return comparisons.map((c) =>
    c.byMetric.map(() => {
      const out = { tTest: at('tTest', k), wilcoxon: at('wilcoxon', k), randomization: at('randomization', k) };
      k++;
      return out;
    }),
  );
}

/** Counts baseline queries present in every candidate (ids are the baseline's in every comparison). */
function sharedByAll(comparisons: readonly Comparison[]): { inEveryRun: number; baselineQueries: number } {
  const seen = new Map<number, number>();
  for (const c of comparisons) for (const q of c.match.commonA) seen.set(q, (seen.get(q) ?? 0) + 1);
  let inEveryRun = 0;
  for (const count of seen.values()) if (count === comparisons.length) inEveryRun++;
  return { inEveryRun, baselineQueries: comparisons[0]!.match.queriesInA };
}
