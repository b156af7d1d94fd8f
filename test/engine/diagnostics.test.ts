import { describe, expect, it } from 'vitest';
import { dcgByPosition, scoresByGrade } from '../../extension/engine/evaluate/diagnostics';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { seededRandom } from '../reference/random';
import { runReference } from '../reference/runPython';
import { buildDump, queryRows, type TestRow } from './dumpBuilder';

function randomRows(seed: number, queries: number, tiedScores: boolean): TestRow[] {
  const random = seededRandom(seed);
  const rows: TestRow[] = [];
  for (let q = 0; q < queries; q++) {
    const n = 1 + Math.floor(random() * 25);
    const grades = Array.from({ length: n }, () => (random() < 0.05 ? NaN : Math.floor(random() * 4)));
    const scores = Array.from({ length: n }, () => (random() < 0.03 ? NaN : tiedScores ? Math.round(random() * 6) : random() * 10 - 3));
    rows.push(...queryRows(`q${q}`, grades, scores));
  }
  return rows;
}

describe('score distribution per grade', () => {
  it('matches numpy.percentile and numpy.histogram on seeded random scores, unjudged and missing counted apart', () => {
    const rows = randomRows(11, 80, false);
    const dump = buildDump(rows);
    const found = scoresByGrade(dump, undefined, 12);
    const reference = runReference<Record<string, { q1: number; median: number; q3: number; bins: number[] }>>('scores_by_grade.py', {
      grades: rows.map((r) => (Number.isNaN(r.label) ? null : r.label)),
      scores: rows.map((r) => (Number.isFinite(r.score) ? r.score : null)),
      edges: found.edges,
    });
    expect(found.grades.map((g) => g.grade)).toEqual([0, 1, 2, 3, null]);
    for (const g of found.grades) {
      const ref = reference[g.grade === null ? 'unjudged' : String(g.grade.toFixed(1))]!;
      expect(g.q1).toBeCloseTo(ref.q1, 12);
      expect(g.median).toBeCloseTo(ref.median, 12);
      expect(g.q3).toBeCloseTo(ref.q3, 12);
      expect(g.bins).toEqual(ref.bins);
    }
    const missing = rows.filter((r) => !Number.isFinite(r.score)).length;
    expect(found.grades.reduce((s, g) => s + g.missing, 0)).toBe(missing);
    expect(found.grades.reduce((s, g) => s + g.count, 0)).toBe(rows.length - missing);
  });

  it('describes one query when given its rows (hand-derived)', () => {
    const dump = buildDump([...queryRows('a', [2, 0, 2, 1], [0.9, 0.1, 0.5, 0.3]), ...queryRows('b', [0], [5])]);
    const found = scoresByGrade(dump, [0, 1, 2, 3], 2);
    expect(found.edges).toEqual([0.1, 0.5, 0.9]);
    expect(found.grades.map((g) => [g.grade, g.count, g.median, g.bins])).toEqual([[0, 1, 0.1, [1, 0]], [1, 1, 0.3, [1, 0]], [2, 2, 0.7, [0, 2]]]);
  });
});

/** Slow, obvious: sort by score (distinct scores), gain 2^g − 1, discount 1/log2(i+1), each over the ideal DCG@k. */
function slowDcgByPosition(rows: TestRow[], k: number, depth: number): { predicted: number[]; ideal: number[]; queries: number } {
  const byQuery = new Map<string, TestRow[]>();
  for (const r of rows) byQuery.set(r.query, [...(byQuery.get(r.query) ?? []), r]);
  const predicted = new Array<number>(depth + 1).fill(0);
  const ideal = new Array<number>(depth + 1).fill(0);
  let queries = 0;
  const gain = (g: number) => (Number.isNaN(g) ? 0 : 2 ** g - 1);
  for (const list of byQuery.values()) {
    const ranked = [...list].sort((a, b) => (Number.isNaN(b.score) ? -Infinity : b.score) - (Number.isNaN(a.score) ? -Infinity : a.score));
    const best = list.map((r) => gain(r.label)).sort((a, b) => b - a);
    let idcg = 0;
    for (let i = 0; i < Math.min(k, best.length); i++) idcg += best[i]! / Math.log2(i + 2);
    if (idcg <= 0) continue;
    queries++;
    ranked.forEach((r, i) => {
      if (i < k) predicted[Math.min(i, depth)]! += gain(r.label) / Math.log2(i + 2) / idcg;
    });
    best.forEach((g, i) => {
      if (i < k) ideal[Math.min(i, depth)]! += g / Math.log2(i + 2) / idcg;
    });
  }
  return { predicted: predicted.map((v) => v / queries), ideal: ideal.map((v) => v / queries), queries };
}

describe('DCG contribution by position', () => {
  it('matches the slow implementation on seeded random dumps with distinct scores', () => {
    for (const [seed, k, depth] of [[1, 10, 10], [2, 5, 3], [3, 20, 20]] as const) {
      const rows = randomRows(seed, 60, false).filter((r) => Number.isFinite(r.score));
      const found = dcgByPosition(buildDump(rows), parseMetricList(`ndcg@${k}`), DEFAULT_CONVENTIONS, { depth });
      const slow = slowDcgByPosition(rows, k, depth);
      expect(found.queries).toBe(slow.queries);
      found.predicted.forEach((v, i) => expect(v).toBeCloseTo(slow.predicted[i]!, 12));
      found.ideal.forEach((v, i) => expect(v).toBeCloseTo(slow.ideal[i]!, 12));
    }
  });

  it('sums to the mean NDCG@k (and the ideal to 1) with tied and missing scores under every tie convention', () => {
    const rows = randomRows(4, 70, true);
    const dump = buildDump(rows);
    for (const ties of ['average', 'pessimistic', 'optimistic', 'file-order'] as const) {
      const conventions = { ...DEFAULT_CONVENTIONS, ties };
      const metrics = parseMetricList('ndcg@10');
      const found = dcgByPosition(dump, metrics, conventions, { depth: 4 });
      const mean = evaluate(dump, metrics, conventions, { sensitivity: false }).summary[0]!.mean;
      expect(found.predicted.reduce((s, v) => s + v, 0)).toBeCloseTo(mean, 12);
      expect(found.ideal.reduce((s, v) => s + v, 0)).toBeCloseTo(1, 12);
    }
  });
});
