/**
 * Published worked examples and values hand-derived from the papers' formulas.
 */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { buildDump, queryRows, type TestRow } from './dumpBuilder';

const LINEAR: Conventions = { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' } };

/** Per-metric values of a single query. */
function single(rows: TestRow[], metrics: string, conventions: Conventions = LINEAR): Record<string, number> {
  const e = evaluate(buildDump(rows), parseMetricList(metrics), conventions);
  const out: Record<string, number> = {};
  e.metrics.forEach((m, i) => (out[m.key] = e.perQuery.values[i]![0]!));
  if (e.perQuery.rbpResidual) out['rbp_residual'] = e.perQuery.rbpResidual[0]!;
  return out;
}

describe('scikit-learn docstring examples (sklearn/metrics/_ranking.py, dcg_score and ndcg_score)', () => {
  const truth = [10, 0, 0, 1, 5];
  it('dcg_score: 9.49..., k=2: 5.63..., tied top pair with k=1: 7.5', () => {
    const q = (scores: number[], m: string) => single(queryRows('garden hose 25m', truth, scores), m)[m]!;
    expect(Math.floor(q([0.1, 0.2, 0.3, 4, 70], 'dcg') * 100) / 100).toBe(9.49); // docstring: 9.49... (truncated)
    expect(Math.floor(q([0.1, 0.2, 0.3, 4, 70], 'dcg@2') * 100) / 100).toBe(5.63); // docstring: 5.63...
    expect(q([1, 0, 0, 0, 1], 'dcg@1')).toBe(7.5); // docstring: (10 + 5) / 2 = 7.5 with tie averaging
  });
  it('ndcg_score: 0.69..., 0.49..., k=4: 0.35..., perfect: 1.0, tied k=1: 0.75', () => {
    const q = (scores: number[], m: string) => single(queryRows('garden hose 25m', truth, scores), m)[m]!;
    expect(Math.floor(q([0.1, 0.2, 0.3, 4, 70], 'ndcg') * 100) / 100).toBe(0.69);
    expect(Math.floor(q([0.05, 1.1, 1.0, 0.5, 0.0], 'ndcg') * 100) / 100).toBe(0.49);
    expect(Math.floor(q([0.05, 1.1, 1.0, 0.5, 0.0], 'ndcg@4') * 100) / 100).toBe(0.35);
    expect(q(truth, 'ndcg@4')).toBeCloseTo(1, 12);
    expect(q([1, 0, 0, 0, 1], 'ndcg@1')).toBeCloseTo(0.75, 12); // docstring: (10/10 + 5/10) / 2
  });
});

describe('Wikipedia, "Discounted cumulative gain" worked example (values from memory)', () => {
  // Grades in ranked order 3, 2, 3, 0, 1, 2; linear gain; discount 1/log2(i+1).
  const ranked = queryRows('cordless drill 18v', [3, 2, 3, 0, 1, 2], [6, 5, 4, 3, 2, 1]);
  it('DCG6 = 6.861', () => {
    expect(single(ranked, 'dcg@6')['dcg@6']).toBeCloseTo(6.861, 3);
  });
  it('the ideal order comes from every judged item, also those ranked below the cut-off: nDCG6 = 6.861 / 8.740 = 0.785', () => {
    // The article's ideal ranking includes two more judged documents (grades 3 and 2) that the system ranked
    // lower: ideal 3,3,3,2,2,2 → IDCG6 = 8.740 (from memory). Hand check: 3 + 3/log2 3 + 3/2 + 2/log2 5 +
    // 2/log2 6 + 2/log2 7 = 8.7403.
    const rows = [...ranked, ...queryRows('cordless drill 18v', [3, 2], [0, -1]).map((r, i) => ({ ...r, item: `extra${i}` }))];
    expect(single(rows, 'ndcg@6')['ndcg@6']).toBeCloseTo(6.861 / 8.74, 3);
    expect(single(rows, 'ndcg@6')['ndcg@6']).toBeCloseTo(0.785, 3);
  });
});

describe('ERR, hand-derived from Chapelle, Metzler, Zhang & Grinspan 2009', () => {
  it('grades 2, 0, 1 with gmax 2', () => {
    // R(g) = (2^g − 1)/2^gmax: R(2) = 3/4, R(0) = 0, R(1) = 1/4.
    // ERR = R1/1 + (1−R1)R2/2 + (1−R1)(1−R2)R3/3 = 3/4 + 0 + (1/4)(1)(1/4)/3 = 37/48.
    expect(single(queryRows('masonry bit 8mm', [2, 0, 1], [3, 2, 1]), 'err')['err']).toBeCloseTo(37 / 48, 14);
    // ERR@2 stops after position 2: 3/4.
    expect(single(queryRows('masonry bit 8mm', [2, 0, 1], [3, 2, 1]), 'err@2')['err@2']).toBeCloseTo(3 / 4, 14);
  });
  it('a configured maximum grade rescales R: gmax 3 gives R(2) = 3/8', () => {
    const c = { ...LINEAR, maxGrade: 3 };
    // ERR = 3/8 + (5/8)(0)/2 + (5/8)(1)(1/8)/3 = 3/8 + 5/192 = 77/192.
    expect(single(queryRows('masonry bit 8mm', [2, 0, 1], [3, 2, 1]), 'err', c)['err']).toBeCloseTo(77 / 192, 14);
  });
  it('a tied pair (grades 2 and 0) averages its two orders: (3/4 + 3/8)/2 = 9/16', () => {
    // Order [2,0]: 3/4. Order [0,2]: 0 + (1 − 0)(3/4)/2 = 3/8. Mean 9/16.
    expect(single(queryRows('masonry bit 8mm', [2, 0], [1, 1]), 'err')['err']).toBeCloseTo(9 / 16, 14);
  });
});

describe('RBP, hand-derived from Moffat & Zobel 2008', () => {
  it('relevance 1, 0, 1 with p = 0.8: RBP = (1−p)(1 + p²) = 0.328, residual p³ = 0.512', () => {
    const v = single(queryRows('led bulb e27', [1, 0, 2], [3, 2, 1]), 'rbp');
    expect(v['rbp']).toBeCloseTo(0.328, 14);
    expect(v['rbp_residual']).toBeCloseTo(0.512, 14);
  });
  it('an unjudged item at position 2 adds its weight (1−p)p = 0.16 to the residual', () => {
    const v = single(queryRows('led bulb e27', [1, NaN, 2], [3, 2, 1]), 'rbp');
    expect(v['rbp']).toBeCloseTo(0.328, 14);
    expect(v['rbp_residual']).toBeCloseTo(0.672, 14);
  });
  it('rbp@2 evaluates to depth 2: RBP = 0.2, residual p² = 0.64', () => {
    const v = single(queryRows('led bulb e27', [1, 0, 2], [3, 2, 1]), 'rbp@2');
    expect(v['rbp@2']).toBeCloseTo(0.2, 14);
  });
});

describe("Kendall's tau-b and inversions, hand-derived (Kendall 1945 tau-b; Burges 2010 |ΔNDCG|)", () => {
  it('scores 3, 2, 1 against grades 1, 0, 2: one concordant, two discordant pairs → tau = −1/3', () => {
    const e = evaluate(buildDump(queryRows('paint roller', [1, 0, 2], [3, 2, 1])), parseMetricList('tau,ndcg@10'), LINEAR);
    expect(e.perQuery.values[0]![0]).toBeCloseTo(-1 / 3, 14);
    expect(e.perQuery.inversions[0]).toBe(2);
  });
  it('one inverted pair (grades 0 then 1): swapping recovers 1 − 1/log2(3) of NDCG', () => {
    const e = evaluate(buildDump(queryRows('paint roller', [0, 1], [2, 1])), parseMetricList('ndcg@10'), LINEAR);
    expect(e.perQuery.inversionCost[0]).toBeCloseTo(1 - 1 / Math.log2(3), 14);
  });
});
