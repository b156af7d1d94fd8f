/**
 * One baseline against several candidates: the family-wide adjustments against values derived by hand
 * from the published procedures, and the ranking rule.
 */
import { describe, expect, it } from 'vitest';
import { combineCandidates } from '../../extension/engine/compare/candidates';
import type { Comparison } from '../../extension/engine/compare/compare';

/** Just the fields combineCandidates reads: per metric the three p-values and the mean Δ. */
function fakeComparison(metrics: { key: string; p: number; delta: number }[], common: number[]): Comparison {
  return {
    headline: 0,
    methodNotes: ['Δ = B − A per query.', 'Holm and Benjamini–Hochberg adjustments are across the 2 metrics compared, per test.'],
    match: { commonA: Uint32Array.from(common), queriesInA: 5 },
    byMetric: metrics.map((m) => ({
      key: m.key,
      summary: { meanDifference: m.delta },
      tTest: { p: m.p },
      wilcoxon: { p: m.p / 2 },
      randomization: { p: Math.min(1, m.p * 2) },
    })),
  } as unknown as Comparison;
}

describe('adjustments across candidates × metrics', () => {
  // Two candidates × two metrics; p-values in family order (c1 m1, c1 m2, c2 m1, c2 m2) = 0.01, 0.04, 0.03, 0.005.
  const comparisons = [
    fakeComparison([{ key: 'ndcg@10', p: 0.01, delta: 0.1 }, { key: 'rr', p: 0.04, delta: 0 }], [0, 1, 2, 3, 4]),
    fakeComparison([{ key: 'ndcg@10', p: 0.03, delta: 0.2 }, { key: 'rr', p: 0.005, delta: 0 }], [0, 1, 2]),
  ];
  const many = combineCandidates('base.csv', ['c1.csv', 'c2.csv'], comparisons);
  const t = many.candidates.flatMap((c) => c.adjusted.map((a) => a.tTest));

  it('Holm 1979 step-down, derived by hand', () => {
    // Holm (1979): sorted 0.005, 0.01, 0.03, 0.04 times m − j + 1 = 4, 3, 2, 1 → 0.02, 0.03, 0.06, 0.04,
    // then running maximum → 0.02, 0.03, 0.06, 0.06; back in family order:
    const expected = [0.03, 0.06, 0.06, 0.02];
    t.forEach((a, k) => expect(a.holm).toBeCloseTo(expected[k]!, 15));
  });

  it('Benjamini–Hochberg 1995 step-up, derived by hand', () => {
    // BH (1995): p(i)·m/i = 0.005·4/1 = 0.02, 0.01·4/2 = 0.02, 0.03·4/3 = 0.04, 0.04·4/4 = 0.04;
    // running minimum from the largest → 0.02, 0.02, 0.04, 0.04; in family order:
    const expected = [0.02, 0.04, 0.04, 0.02];
    t.forEach((a, k) => expect(a.benjaminiHochberg).toBeCloseTo(expected[k]!, 15));
  });

  it('adjusts each test on its own family (Wilcoxon p = t p / 2 here, so every Holm value halves)', () => {
    const w = many.candidates.flatMap((c) => c.adjusted.map((a) => a.wilcoxon.holm));
    expect(w).toEqual(t.map((a) => a.holm / 2));
  });

  it('ranks on the headline mean Δ, highest first, and counts queries in every run', () => {
    expect(many.ranking).toEqual([1, 0]);
    expect(many.candidates.map((c) => c.rank)).toEqual([2, 1]);
    expect(many.inEveryRun).toBe(3);
    expect(many.baselineQueries).toBe(5);
    // The pair-level note is replaced by the family-level one.
    expect(many.methodNotes.filter((n) => n.includes('adjustments are across'))).toEqual([
      'Holm (1979) and Benjamini–Hochberg (1995) adjustments are across the 4 tests of 2 candidates × 2 metrics, separately for the t, Wilcoxon and randomization tests.',
    ]);
  });

  it('equal means keep the order given; a candidate without pairs (NaN mean) ranks last', () => {
    const tied = ['a', 'b', 'c', 'd'].map((_, i) => fakeComparison([{ key: 'ndcg@10', p: 0.5, delta: [0.1, Number.NaN, 0.1, 0.3][i]! }], [0]));
    expect(combineCandidates('base', ['a', 'b', 'c', 'd'], tied).ranking).toEqual([3, 0, 2, 1]);
  });

  it('refuses comparisons over different metrics', () => {
    const other = fakeComparison([{ key: 'ap', p: 0.1, delta: 0 }, { key: 'rr', p: 0.1, delta: 0 }], [0]);
    expect(() => combineCandidates('base', ['x', 'y'], [comparisons[0]!, other])).toThrow(/differ in their metrics/);
  });
});
