/**
 * Hand-derived tie cases, and the exact tie expectations (McSherry & Najork 2008) of ERR, AP and RR checked
 * by enumerating every permutation of a large tied group.
 */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS, type Conventions, type TieConvention } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { buildDump, queryRows } from './dumpBuilder';
import { slowQuery } from '../reference/slowMetrics';

const LINEAR: Conventions = { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' } };

function value(grades: number[], scores: number[], metric: string, conventions: Conventions = LINEAR): number {
  const e = evaluate(buildDump(queryRows('wood screws 4x40', grades, scores)), parseMetricList(metric), conventions);
  return e.perQuery.values[0]![0]!;
}

describe('hand-derived tie cases', () => {
  it('a relevant and a non-relevant item tied at the top: AP = (1 + 1/2)/2 = 0.75', () => {
    expect(value([1, 0], [5, 5], 'ap')).toBeCloseTo(0.75, 14);
  });
  it('one relevant item in a tied group of three at the top: RR = (1 + 1/2 + 1/3)/3 = 11/18', () => {
    expect(value([0, 1, 0], [2, 2, 2], 'rr')).toBeCloseTo(11 / 18, 14);
  });
  it('two relevant of three tied: RR = P(first)·1 + P(second)·1/2 = 2/3 + (1/3)(1/2) = 5/6', () => {
    // The first relevant is at slot 1 with probability 2/3, else at slot 2.
    expect(value([1, 0, 1], [2, 2, 2], 'rr')).toBeCloseTo(5 / 6, 14);
  });
  it('grades 0 and 1 tied, NDCG@1: pessimistic 0, average 1/2, optimistic 1, file order 0', () => {
    const at = (ties: TieConvention) => value([0, 1], [3, 3], 'ndcg@1', { ...LINEAR, ties });
    expect(at('pessimistic')).toBe(0);
    expect(at('average')).toBeCloseTo(0.5, 14);
    expect(at('optimistic')).toBeCloseTo(1, 14);
    expect(at('file-order')).toBe(0);
  });
  it('a tie straddling the cut-off: P@2 with grades 1, 1, 0, 0 where the last three are tied = (1 + 2·1/3)/2', () => {
    // Slot 1 holds the untied relevant item; slot 2 is one of three tied items of which one is relevant.
    expect(value([1, 1, 0, 0], [9, 4, 4, 4], 'p@2')).toBeCloseTo((1 + 1 / 3) / 2, 14);
  });
  it('DCG@2 of a tied pair with gains 3 and 1 (linear) = 2·(1 + 1/log2 3)', () => {
    expect(value([3, 1], [0.5, 0.5], 'dcg@2')).toBeCloseTo(2 * (1 + 1 / Math.log2(3)), 14);
  });
  it('tau-b of two tied scores with different grades is NaN only when one side is constant', () => {
    expect(value([1, 0], [2, 2], 'tau')).toBeNaN(); // all scores equal
    expect(value([1, 1], [2, 1], 'tau')).toBeNaN(); // all grades equal
    // Scores 2,2,1 vs grades 1,0,0: pairs (1,3) concordant, (1,2) tied in score, (2,3) tied in grade.
    // tau-b = (1 − 0)/sqrt((3 − 1)(3 − 1)) = 1/2.
    expect(value([1, 0, 0], [2, 2, 1], 'tau')).toBeCloseTo(0.5, 14);
  });
});

describe('exact expectations over a large tied group, checked by enumerating all 8! orderings', () => {
  // One tied group of 8 items with four distinct grades, cut-offs inside and beyond the group,
  // behind one untied item, so the group starts at position 2.
  const grades = [1, 3, 0, 2, 0, 1, 3, 0, 2];
  const scores = [9, 5, 5, 5, 5, 5, 5, 5, 5];
  const items = grades.map((label, i) => ({ item: `sku-${i}`, label, score: scores[i]! }));
  const specs = parseMetricList('err@3,err@6,err,ap,rr,rr@2,ndcg@4,p@5,rbp');
  it.each(specs.map((s) => [s.key, s] as const))('%s', (_key, spec) => {
    const expected = slowQuery(items, [spec], DEFAULT_CONVENTIONS, 3, 10).values[spec.key]!;
    const actual = value(grades, scores, spec.key, DEFAULT_CONVENTIONS);
    expect(Math.abs(actual - expected)).toBeLessThan(1e-12);
  });
});

describe('ERR over a large tied group with many zero grades (order statistics, hand-derived)', () => {
  // One untied non-relevant item first, then a tied group of m items; gmax = 2 so R(2) = 3/4, R(1) = 1/4.
  const m = 500;
  const expectedOne = (r: number, k: number) => {
    // A single stopper is equally likely on each of the m slots (positions 2..m+1).
    let sum = 0;
    for (let p = 1; p <= Math.min(m, k - 1); p++) sum += 1 / (1 + p);
    return (r * sum) / m;
  };
  const build = (stoppers: number[]) => {
    const grades = [0, ...Array.from({ length: m }, (_, i) => (i < stoppers.length ? stoppers[i]! : 0))];
    const scores = [2, ...Array.from({ length: m }, () => 1)];
    return { grades, scores };
  };
  it('one stopper: ERR = R · (1/m) Σ_p 1/(p+1)', () => {
    const { grades, scores } = build([2]);
    expect(value(grades, scores, 'err', DEFAULT_CONVENTIONS)).toBeCloseTo(expectedOne(3 / 4, Infinity), 12);
    expect(value(grades, scores, 'err@40', DEFAULT_CONVENTIONS)).toBeCloseTo(expectedOne(3 / 4, 40), 12);
  });
  it('two stoppers of grades 2 and 1: first stopper at slot p with P = (m−p)/C(m,2), second with (p−1)/C(m,2)', () => {
    const { grades, scores } = build([2, 1]);
    const pairs = (m * (m - 1)) / 2;
    // B_1 = mean R = (3/4 + 1/4)/2; B_2 = mean of R_second·(1 − R_first) = (1/4·1/4 + 3/4·3/4)/2.
    const b1 = (3 / 4 + 1 / 4) / 2;
    const b2 = ((1 / 4) * (1 / 4) + (3 / 4) * (3 / 4)) / 2;
    let expected = 0;
    for (let p = 1; p <= m; p++) expected += (b1 * (m - p) + b2 * (p - 1)) / pairs / (1 + p);
    expect(value(grades, scores, 'err', DEFAULT_CONVENTIONS)).toBeCloseTo(expected, 12);
  });
});
