/**
 * NDCG, DCG and Kendall's tau against scikit-learn (dcg_score, ndcg_score) and scipy (kendalltau) on seeded
 * random lists with many tied scores, run through test/reference/python.mjs (test/reference/sklearn_scipy.py).
 *
 * Where the definitions match:
 * - sklearn uses linear gain (the grade itself) and 1/log2(i+1): compare with gain linear.
 * - ignore_ties=False averages tied groups (McSherry & Najork 2008) = our ties `average`, on any list.
 * - ignore_ties=True ranks by numpy's argsort reversed; among equal scores that order is an implementation
 *   detail (reverse file order for short arrays), which none of our conventions reproduce on purpose. So it
 *   is compared only on lists without tied scores, where every tie convention gives the same number.
 * - sklearn's ndcg_score scores 0 when every grade is 0 = our no-relevant policy `zero`.
 * - scipy's kendalltau defaults to tau-b and returns NaN when either side is constant = our `tau`.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS, type Conventions, type TieConvention } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { buildDump, queryRows } from './dumpBuilder';
import { seededRandom } from '../reference/random';
import { runReference } from '../reference/runPython';

interface Case {
  grades: number[];
  scores: number[];
  k: number | null;
}
interface Result {
  dcg_tie_averaged: number;
  ndcg_tie_averaged: number;
  dcg_as_sorted: number;
  ndcg_as_sorted: number;
  tau: number | null;
}

function makeCases(): Case[] {
  const rand = seededRandom(20261202);
  const cases: Case[] = [];
  for (let c = 0; c < 400; c++) {
    const n = 2 + Math.floor(rand() * 40);
    const tieFree = c % 4 === 0;
    const levels = 1 + Math.floor(rand() * 6); // few score levels → many ties
    const grades = Array.from({ length: n }, () => Math.floor(rand() * (1 + Math.floor(rand() * 5))));
    const scores = Array.from({ length: n }, (_, i) => (tieFree ? rand() + i * 1e-9 : Math.floor(rand() * levels) * 0.25));
    const k = c % 3 === 0 ? null : 1 + Math.floor(rand() * (n + 2));
    cases.push({ grades, scores, k });
  }
  return cases;
}

const hasTies = (scores: number[]) => new Set(scores).size < scores.length;

describe('scikit-learn and scipy reference values', () => {
  const cases = makeCases();
  let results: Result[] = [];
  beforeAll(() => {
    results = runReference<{ results: Result[] }>('sklearn_scipy.py', { cases }).results;
  });

  function ours(c: Case, ties: TieConvention): { dcg: number; ndcg: number; tau: number } {
    const k = c.k === null ? '' : `@${c.k}`;
    const conventions: Conventions = { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' }, ties, noRelevant: 'zero' };
    const e = evaluate(buildDump(queryRows('wood screws 4x40', c.grades, c.scores)), parseMetricList(`dcg${k},ndcg${k},tau`), conventions);
    return { dcg: e.perQuery.values[0]![0]!, ndcg: e.perQuery.values[1]![0]!, tau: e.perQuery.values[2]![0]! };
  }

  it('the generated cases exercise ties, tie-free lists and empty queries', () => {
    expect(cases.filter((c) => hasTies(c.scores)).length).toBeGreaterThan(200);
    expect(cases.filter((c) => !hasTies(c.scores)).length).toBeGreaterThan(90);
    expect(cases.filter((c) => c.grades.every((g) => g === 0)).length).toBeGreaterThan(3);
  });

  it('DCG and NDCG with tie averaging equal sklearn ignore_ties=False (linear gain)', () => {
    cases.forEach((c, i) => {
      const r = results[i]!;
      const o = ours(c, 'average');
      expect(o.dcg).toBeCloseTo(r.dcg_tie_averaged, 9);
      expect(o.ndcg).toBeCloseTo(r.ndcg_tie_averaged, 9);
    });
  });

  it('on tie-free lists every tie convention equals sklearn ignore_ties=True', () => {
    cases.forEach((c, i) => {
      if (hasTies(c.scores)) return;
      const r = results[i]!;
      for (const ties of ['average', 'pessimistic', 'optimistic', 'file-order'] as const) {
        const o = ours(c, ties);
        expect(o.dcg).toBeCloseTo(r.dcg_as_sorted, 9);
        expect(o.ndcg).toBeCloseTo(r.ndcg_as_sorted, 9);
      }
    });
  });

  it("Kendall's tau-b equals scipy.stats.kendalltau, NaN where scipy gives NaN", () => {
    cases.forEach((c, i) => {
      const expected = results[i]!.tau;
      const o = ours(c, 'average');
      if (expected === null) expect(o.tau).toBeNaN();
      else expect(o.tau).toBeCloseTo(expected, 10);
    });
  });
});
