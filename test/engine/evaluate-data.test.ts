/**
 * Degenerate data, policies, errors, warnings, convention sensitivity, segments and the query detail,
 * on small hand-made dumps from an invented hardware store's product search.
 */
import { describe, expect, it } from 'vitest';
import { CancelledError, InputError } from '../../extension/engine/errors';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { segmentBreakdown } from '../../extension/engine/evaluate/segments';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { buildDump, queryRows, type TestRow } from './dumpBuilder';
import { seededRandom } from '../reference/random';

const LINEAR: Conventions = { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' } };
const key = (e: ReturnType<typeof evaluate>, k: string) => e.perQuery.values[e.metrics.findIndex((m) => m.key === k)]!;

describe('degenerate data', () => {
  const rows: TestRow[] = [
    // Duplicate of sku-a with a higher score: ignored, the first row counts.
    ...queryRows('cordless drill 18v', [0, 2, 1], [3, 2, 1]).map((r, i) => ({ ...r, item: ['sku-a', 'sku-b', 'sku-c'][i]! })),
    { query: 'cordless drill 18v', item: 'sku-a', label: 3, score: 99 },
    // Missing scores go last in file order; an unjudged row counts as grade 0.
    { query: 'wood screws 4x40', item: 'sku-d', label: 2, score: NaN },
    { query: 'wood screws 4x40', item: 'sku-e', label: 1, score: NaN },
    { query: 'wood screws 4x40', item: 'sku-f', label: NaN, score: 1 },
    // No relevant item.
    ...queryRows('garden hose 25m', [0, 0], [1, 1]),
    // A single item.
    { query: 'masonry bit 8mm', item: 'sku-g', label: 1, score: 0.3 },
  ];
  const dump = buildDump(rows);

  it('counts duplicates, missing scores, unjudged rows, ties, single-item and no-relevant queries', () => {
    const e = evaluate(dump, parseMetricList(DEFAULT_METRICS), LINEAR);
    expect(e.degenerate).toEqual({
      singleItemQueries: 1,
      noRelevantQueries: 1,
      duplicateRows: 1,
      missingScoreRows: 2,
      unjudgedRows: 1,
      tiedScoreRows: 2,
    });
    expect(e.perQuery.items[dump.queries.find('cordless drill 18v')]).toBe(3);
    const text = e.warnings.join('\n');
    for (const fragment of ['1 row repeats', '2 rows have no usable score', '1 row has no judgment', '2 rows tie', '1 query has a single item', 'left out of every mean']) {
      expect(text).toContain(fragment);
    }
  });

  it('ranks the first of duplicate rows, and unscored rows last in file order', () => {
    const e = evaluate(dump, parseMetricList('dcg@3'), LINEAR);
    // cordless drill: grades 0, 2, 1 in score order (the duplicate's grade 3 is not used).
    expect(key(e, 'dcg@3')[dump.queries.find('cordless drill 18v')]).toBeCloseTo(2 / Math.log2(3) + 1 / 2, 14);
    // wood screws: unjudged (0) first by score, then grade 2, then grade 1 (file order).
    expect(key(e, 'dcg@3')[dump.queries.find('wood screws 4x40')]).toBeCloseTo(2 / Math.log2(3) + 1 / 2, 14);
  });

  it('no-relevant policy: skip leaves the query out of every mean; zero and one set normalised metrics only', () => {
    const q = dump.queries.find('garden hose 25m');
    const metrics = parseMetricList('ndcg@10,ap,rr,r@10,dcg@10,err@10,p@5,rbp');
    const skip = evaluate(dump, metrics, LINEAR);
    expect(skip.perQuery.skipped[q]).toBe(1);
    skip.perQuery.values.forEach((col) => expect(col[q]).toBeNaN());
    expect(skip.summary[0]!.counted).toBe(3);
    for (const [policy, v] of [['zero', 0], ['one', 1]] as const) {
      const e = evaluate(dump, metrics, { ...LINEAR, noRelevant: policy });
      for (const k of ['ndcg@10', 'ap', 'rr', 'r@10']) expect(key(e, k)[q]).toBe(v);
      for (const k of ['dcg@10', 'err@10', 'p@5', 'rbp']) expect(key(e, k)[q]).toBe(0);
      expect(e.summary[0]!.counted).toBe(4);
    }
  });
});

describe('errors and cancellation', () => {
  it('refuses exponential gain with negative grades, and ERR grades above the maximum grade', () => {
    const negative = buildDump(queryRows('paint roller', [-1, 2], [2, 1]));
    expect(() => evaluate(negative, parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS)).toThrow(InputError);
    expect(() => evaluate(negative, parseMetricList('ndcg@10'), LINEAR)).not.toThrow();
    const graded = buildDump(queryRows('paint roller', [1, 4], [2, 1]));
    expect(() => evaluate(graded, parseMetricList('err@10'), { ...LINEAR, maxGrade: 3 })).toThrow(InputError);
  });
  it('refuses a gain map without a gain for a grade in the data', () => {
    const dump = buildDump(queryRows('paint roller', [0, 1, 2], [3, 2, 1]));
    const gain = { kind: 'map' as const, gains: new Map([[0, 0], [1, 1]]) };
    expect(() => evaluate(dump, parseMetricList('ndcg@10'), { ...LINEAR, gain })).toThrow(/grade 2/);
  });
  it('stops with CancelledError when the signal is aborted, and reports progress up to 1', () => {
    const dump = buildDump(queryRows('paint roller', [0, 1], [2, 1]));
    const controller = new AbortController();
    controller.abort();
    expect(() => evaluate(dump, parseMetricList('ndcg@10'), LINEAR, { signal: controller.signal })).toThrow(CancelledError);
    const seen: number[] = [];
    evaluate(dump, parseMetricList('ndcg@10'), LINEAR, { onProgress: (f) => seen.push(f) });
    expect(seen[seen.length - 1]).toBe(1);
  });
});

describe('convention sensitivity', () => {
  it('every row equals the headline mean of a separate evaluation under that row’s conventions', () => {
    const rand = seededRandom(5);
    const rows: TestRow[] = [];
    for (let q = 0; q < 60; q++) {
      const n = 1 + Math.floor(rand() * 15);
      // A third of the queries with distinct scores (no tie above the cut-off: the tie rows share a DCG there),
      // the rest with scores 0–3, tied.
      const distinct = q % 3 === 0;
      for (let i = 0; i < n; i++) {
        rows.push({ query: `drill bits ${q}`, item: `sku-${i}`, label: Math.floor(rand() * rand() * 4), score: distinct ? rand() : Math.floor(rand() * 4) });
      }
    }
    const dump = buildDump(rows);
    const metrics = parseMetricList('ap,ndcg@5,err@10');
    const e = evaluate(dump, metrics, DEFAULT_CONVENTIONS);
    expect(e.sensitivity.map((r) => r.label)).toEqual([
      'gain: exponential (as configured)',
      'gain: linear',
      'ties: average (as configured)',
      'ties: pessimistic',
      'ties: optimistic',
      'ties: file-order',
      'no relevant: skip (as configured)',
      'no relevant: zero',
      'no relevant: one',
    ]);
    const distinct = new Set(e.sensitivity.map((r) => r.mean.toFixed(12)));
    expect(distinct.size).toBeGreaterThan(4);
    for (const row of e.sensitivity) {
      const alone = evaluate(dump, parseMetricList('ndcg@5'), row.conventions, { sensitivity: false });
      expect(row.mean).toBeCloseTo(alone.summary[0]!.mean, 12);
      expect(row.counted).toBe(alone.summary[0]!.counted);
    }
  });
});

describe('segments', () => {
  it('averages each metric over the queries of each segment value (value of the first row)', () => {
    const rows: TestRow[] = [
      { query: 'cordless drill 18v', item: 'a', label: 1, score: 2, segments: { aisle: 'power tools' } },
      { query: 'cordless drill 18v', item: 'b', label: 0, score: 1, segments: { aisle: 'fasteners' } },
      { query: 'impact driver', item: 'a', label: 0, score: 2, segments: { aisle: 'power tools' } },
      { query: 'impact driver', item: 'b', label: 1, score: 1, segments: { aisle: 'power tools' } },
      { query: 'wood screws 4x40', item: 'c', label: 1, score: 1, segments: { aisle: 'fasteners' } },
    ];
    const dump = buildDump(rows, ['aisle']);
    const e = evaluate(dump, parseMetricList('rr,p@1'), LINEAR);
    const seg = segmentBreakdown(dump, e, 0);
    expect(seg).toEqual([
      { value: 'power tools', queries: 2, means: [0.75, 0.5] },
      { value: 'fasteners', queries: 1, means: [1, 1] },
    ]);
  });
});

describe('query detail', () => {
  const rand = seededRandom(11);
  const grades = Array.from({ length: 30 }, () => Math.floor(rand() * 4));
  const scores = Array.from({ length: 30 }, () => Math.floor(rand() * 8));
  const dump = buildDump(queryRows('cordless drill 18v', grades, scores));

  for (const ties of ['average', 'pessimistic', 'file-order'] as const) {
    it(`agrees with evaluate() and sums its parts (ties ${ties})`, () => {
      const c = { ...DEFAULT_CONVENTIONS, ties };
      const e = evaluate(dump, parseMetricList('ndcg@7,dcg@7,ap,rbp'), c);
      const d = queryDetail(dump, 0, c, 7, { maxPairs: 10_000 });
      expect(d.positions).toHaveLength(30);
      expect(d.ndcg).toBeCloseTo(e.perQuery.values[0]![0]!, 12);
      expect(d.values['ndcg@7']).toBeCloseTo(e.perQuery.values[0]![0]!, 12);
      expect(d.values['ap']).toBeCloseTo(e.perQuery.values[2]![0]!, 12);
      expect(d.dcg).toBeCloseTo(e.perQuery.values[1]![0]!, 12);
      expect(d.positions[29]!.cumulativeDcg).toBeCloseTo(d.dcg, 12);
      expect(d.positions[6]!.idealCumulativeDcg).toBeCloseTo(d.idealDcg, 12);
      // Ideal order: grades never rise; ideal positions are a permutation matching idealOrder.
      const idealGrades = d.idealOrder.map((r) => dump.label[r]!);
      for (let i = 1; i < idealGrades.length; i++) expect(idealGrades[i]).toBeLessThanOrEqual(idealGrades[i - 1]!);
      for (const p of d.positions) expect(d.idealOrder[p.idealPosition - 1]).toBe(p.row);
      // Within a grade the ideal order keeps the model's order, so equal-grade items never cross:
      // for two items of the same grade, the one the model ranked first is first in the ideal order too.
      for (const p of d.positions) {
        for (const q of d.positions) {
          if (p.position < q.position && dump.label[p.row] === dump.label[q.row]) expect(p.idealPosition).toBeLessThan(q.idealPosition);
        }
      }
      // Pairs: full count, sorted by recovery, summing to the evaluation's inversion cost.
      expect(d.invertedPairsTotal).toBe(e.perQuery.inversions[0]);
      expect(d.invertedPairs).toHaveLength(d.invertedPairsTotal);
      const total = d.invertedPairs.reduce((s, p) => s + p.ndcgRecovered, 0);
      expect(total).toBeCloseTo(e.perQuery.inversionCost[0]!, 10);
      for (let i = 1; i < d.invertedPairs.length; i++) {
        expect(d.invertedPairs[i]!.ndcgRecovered).toBeLessThanOrEqual(d.invertedPairs[i - 1]!.ndcgRecovered);
      }
      for (const p of d.invertedPairs) {
        expect(dump.score[p.aboveRow]).toBeGreaterThan(dump.score[p.belowRow]!);
        expect(dump.label[p.aboveRow]).toBeLessThan(dump.label[p.belowRow]!);
      }
      const capped = queryDetail(dump, 0, c, 7, { maxPairs: 5 });
      expect(capped.invertedPairs).toEqual(d.invertedPairs.slice(0, 5));
      expect(capped.invertedPairsTotal).toBe(d.invertedPairsTotal);
    });
  }

  it('reports tie group sizes and the group-average discount under average ties', () => {
    const small = buildDump(queryRows('wood screws 4x40', [1, 0, 2], [5, 5, 1]));
    const d = queryDetail(small, 0, LINEAR, 10);
    expect(d.positions.map((p) => p.tieGroupSize)).toEqual([2, 2, 1]);
    const mean = (1 + 1 / Math.log2(3)) / 2;
    expect(d.positions[0]!.discount).toBeCloseTo(mean, 14);
    expect(d.positions[0]!.contribution).toBeCloseTo(mean, 14); // grade 1 × mean discount
    expect(d.positions[2]!.contribution).toBeCloseTo(2 / 2, 14); // grade 2 at position 3
  });
});
