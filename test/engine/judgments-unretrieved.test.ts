/**
 * Judged items that the run never retrieved count in the ideal ranking and in every denominator that
 * depends on the judged set (common practice for judged collections: the ideal is built from every judged
 * item of the query). Checked against a hand-derived value, scikit-learn with the unretrieved items padded
 * below every retrieved score, and a slow obvious implementation of recall and AP.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { readDump } from '../../extension/engine/readers';
import { InputError } from '../../extension/engine/errors';
import { TempDir } from './fixtures/readers/tempFiles';
import { judgedCollection, joined } from './judgedSets';
import { runReference } from '../reference/runPython';

const tmp = new TempDir();

describe('the hand-derived case', () => {
  // Run q1: d1 (score 3), d2 (score 2); judgments d1 = 0, d2 = 1, d3 = 3 (d3 never retrieved).
  // Exponential gain: DCG@10 = (2^1 − 1)/log2 3; ideal = 7/log2 2 + 1/log2 3 + 0, so
  // NDCG@10 = (1/log2 3) / (7 + 1/log2 3) = 0.0827 (derived by hand from the definition).
  const expected = (1 / Math.log2(3)) / (7 + 1 / Math.log2(3));

  it('NDCG@10, recall, AP, RR and precision from a run file and a judgments file', async () => {
    const run = tmp.file('hand.run', 'q1 Q0 d1 1 3.0 demo\nq1 Q0 d2 2 2.0 demo\n');
    const judged = tmp.file('hand.judgments', 'q1 0 d1 0\nq1 0 d2 1\nq1 0 d3 3\n');
    const dump = await readDump(run, { judgments: judged });
    const e = evaluate(dump, parseMetricList('ndcg@10,r@10,ap,rr,p@2'), DEFAULT_CONVENTIONS);
    expect(e.perQuery.values[0]![0]).toBeCloseTo(0.0827, 4);
    expect(e.perQuery.values[0]![0]).toBe(expected);
    expect(e.perQuery.values[1]![0]).toBe(0.5); // 1 of 2 relevant judged items retrieved
    expect(e.perQuery.values[2]![0]).toBe(0.25); // (1/2) / R, R = 2
    expect(e.perQuery.values[3]![0]).toBe(0.5); // first relevant at position 2
    expect(e.perQuery.values[4]![0]).toBe(0.5); // unchanged: over the retrieved list
    expect(e.perQuery.relevant[0]).toBe(2);
    expect(dump.notes.judgments?.unretrieved).toBe(1);
  });

  it('a query whose only relevant items were never retrieved scores 0, it is not a no-relevant query', () => {
    const dump = joined(
      [{ query: 'q1', item: 'd1', label: NaN, score: 2 }, { query: 'q1', item: 'd2', label: NaN, score: 1 }],
      [{ query: 'q1', item: 'd1', grade: 0 }, { query: 'q1', item: 'd9', grade: 2 }],
    );
    const e = evaluate(dump, parseMetricList('ndcg@10,ap,rr,r@10'), DEFAULT_CONVENTIONS);
    expect(e.perQuery.skipped[0]).toBe(0);
    expect(e.degenerate.noRelevantQueries).toBe(0);
    expect(e.perQuery.values.map((v) => v[0])).toEqual([0, 0, 0, 0]);
  });

  it('the query detail shows the unretrieved item in the ideal ranking, marked, and its ideal DCG', () => {
    const dump = joined(
      [{ query: 'q1', item: 'd1', label: NaN, score: 3 }, { query: 'q1', item: 'd2', label: NaN, score: 2 }],
      [{ query: 'q1', item: 'd1', grade: 0 }, { query: 'q1', item: 'd2', grade: 1 }, { query: 'q1', item: 'd3', grade: 3 }],
    );
    const d = queryDetail(dump, 0, DEFAULT_CONVENTIONS, 10);
    expect(d.notRetrieved).toEqual([{ item: 'd3', label: 3, gain: 7, idealPosition: 1 }]);
    expect(d.positions.map((p) => p.idealPosition)).toEqual([3, 2]);
    expect(d.ndcg).toBe(expected);
    expect(d.idealDcg).toBe(7 + 1 / Math.log2(3));
  });
});

describe('ERR', () => {
  it('takes its default gmax from the highest judged grade, retrieved or not', () => {
    const dump = joined([{ query: 'q1', item: 'd1', label: NaN, score: 1 }], [{ query: 'q1', item: 'd1', grade: 1 }, { query: 'q1', item: 'd2', grade: 4 }]);
    const e = evaluate(dump, parseMetricList('err@10'), DEFAULT_CONVENTIONS);
    // R(1) = (2^1 − 1) / 2^4 at position 1 (Chapelle et al. 2009), derived by hand.
    expect(e.perQuery.values[0]![0]).toBe(1 / 16);
    expect(e.warnings.join(' ')).toContain('ERR uses a maximum grade of 4');
  });
});

describe('missing queries', () => {
  const rows = [{ query: 'q1', item: 'd1', label: NaN, score: 1 }];
  const judgments = [{ query: 'q1', item: 'd1', grade: 1 }, { query: 'q2', item: 'd5', grade: 2 }, { query: 'q3', item: 'd6', grade: 0 }];

  it('skip (default): counted with examples, left out of every mean', () => {
    const dump = joined(rows, judgments);
    expect(dump.queries.size).toBe(1);
    expect(dump.notes.judgments).toMatchObject({ absentQueries: 2, absentExamples: ['q2', 'q3'], missingQueries: 'skip' });
    expect(evaluate(dump, parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS).summary[0]!.mean).toBe(1);
  });

  it('zero: every metric 0 for each judged query the run lacks, in every mean', () => {
    const dump = joined(rows, judgments, 'zero');
    expect(dump.queries.size).toBe(3);
    const metrics = parseMetricList('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau,dcg@3');
    const e = evaluate(dump, metrics, DEFAULT_CONVENTIONS);
    for (let m = 0; m < metrics.length; m++) {
      expect([e.perQuery.values[m]![1], e.perQuery.values[m]![2]], metrics[m]!.key).toEqual([0, 0]);
    }
    expect(e.summary[0]).toEqual({ key: 'ndcg@10', mean: 1 / 3, counted: 3 });
    expect(e.warnings.join(' ')).toMatch(/2 judged queries have no row in the run/);
  });

  it('zero: the rows under other conventions count the added queries as 0, like the headline', () => {
    const e = evaluate(joined(rows, judgments, 'zero'), parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS);
    const configured = e.sensitivity.filter((r) => r.label.includes('as configured'));
    expect(configured.length).toBeGreaterThan(0);
    for (const r of configured) expect([r.label, r.mean, r.counted]).toEqual([r.label, 1 / 3, 3]);
    // q1 is the only query with a list; every other convention scores its single relevant item at the
    // top (1), and the two added queries stay 0 under each (hand-derived).
    for (const r of e.sensitivity) if (r.unavailable === undefined) expect([r.label, r.counted]).toEqual([r.label, 3]);
  });
});

describe('scikit-learn with the unretrieved items padded below every retrieved score', () => {
  interface Case { grades: number[]; scores: number[]; unretrieved: number[]; k: number }
  const { rows, judgments } = judgedCollection(20261203, 300);
  const dump = joined(rows, judgments);
  const linear: Conventions = { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' }, noRelevant: 'zero' };
  const cases: Case[] = [];
  const cutoffs = [1, 3, 5, 10, 20];
  for (let q = 0; q < dump.queries.size; q++) {
    const name = dump.queries.get(q);
    const list = rows.filter((r) => r.query === name);
    const grades = list.map((r) => judgments.find((j) => j.query === name && j.item === r.item)?.grade ?? 0);
    const unretrieved = judgments.filter((j) => j.query === name && !list.some((r) => r.item === j.item)).map((j) => j.grade);
    for (const k of cutoffs) cases.push({ grades, scores: list.map((r) => r.score), unretrieved, k });
  }
  let results: { ndcg_padded: number | null; ndcg_masked: number | null }[] = [];
  beforeAll(() => {
    results = runReference<{ results: typeof results }>('sklearn_padded.py', { cases }).results;
  });

  it('matches ndcg_score at cut-offs within the list and the composed dcg_score ratio at every cut-off', () => {
    const e = evaluate(dump, parseMetricList(cutoffs.map((k) => `ndcg@${k}`).join(',')), linear);
    let compared = 0;
    let withUnretrieved = 0;
    cases.forEach((c, i) => {
      const q = Math.floor(i / cutoffs.length);
      const ours = e.perQuery.values[i % cutoffs.length]![q]!;
      const reference = results[i]!;
      // sklearn scores a query with nothing relevant 0 = our policy `zero`.
      expect(ours).toBeCloseTo(reference.ndcg_masked ?? 0, 12);
      if (c.k <= c.grades.length) expect(ours).toBeCloseTo(reference.ndcg_padded!, 12);
      compared++;
      if (c.unretrieved.some((g) => g > 0)) withUnretrieved++;
    });
    expect(compared).toBe(cases.length);
    expect(withUnretrieved).toBeGreaterThan(100);
  });
});

describe('recall and AP against a slow implementation from the definitions', () => {
  it('divides by every relevant judged item, retrieved or not', () => {
    const { rows, judgments } = judgedCollection(7, 200);
    const dump = joined(rows, judgments);
    const c: Conventions = { ...DEFAULT_CONVENTIONS, ties: 'file-order', noRelevant: 'zero' };
    const e = evaluate(dump, parseMetricList('r@5,ap'), c);
    for (let q = 0; q < dump.queries.size; q++) {
      const name = dump.queries.get(q);
      const gradeOf = (item: string) => judgments.find((j) => j.query === name && j.item === item)?.grade ?? 0;
      // Score descending, file order among equal scores (the `file-order` convention).
      const list = rows.filter((r) => r.query === name).map((r, i) => ({ ...r, i })).sort((a, b) => b.score - a.score || a.i - b.i);
      const relevant = judgments.filter((j) => j.query === name && j.grade >= 1).length;
      const hits = list.map((r) => gradeOf(r.item) >= 1);
      const recall = relevant === 0 ? 0 : hits.slice(0, 5).filter(Boolean).length / relevant;
      let found = 0;
      let sum = 0;
      hits.forEach((h, p) => {
        if (h) sum += ++found / (p + 1);
      });
      expect(e.perQuery.values[0]![q]).toBeCloseTo(recall, 14);
      expect(e.perQuery.values[1]![q]).toBeCloseTo(relevant === 0 ? 0 : sum / relevant, 14);
    }
  });
});

describe('judgments files', () => {
  it('a (query, item) pair judged twice is an error naming the file and the line', async () => {
    const run = tmp.file('twice.run', 'q1 Q0 d1 1 3.0 demo\n');
    const judged = tmp.file('twice.judgments', 'q1 0 d1 0\nq1 0 d2 1\nq1 0 d1 2\n');
    const err = await readDump(run, { judgments: judged }).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).line).toBe(3);
    expect((err as InputError).message).toContain(`${judged}:3: expected each (query, item) pair judged once; 'q1' / 'd1' is already judged on line 1`);
  });

  it('a grade the gain cannot take, on a judged item the run never retrieved, names the judgments file and line', async () => {
    const run = tmp.file('gain.run', 'q1 Q0 d1 1 3.0 demo\n');
    const judged = tmp.file('gain.judgments', 'q1 0 d1 1\nq1 0 d2 3\n');
    const dump = await readDump(run, { judgments: judged });
    const gain = { kind: 'map' as const, gains: new Map([[0, 0], [1, 1]]) };
    expect(() => evaluate(dump, parseMetricList('ndcg@10'), { ...DEFAULT_CONVENTIONS, gain })).toThrow(
      `${judged}:2: expected a gain for grade 3 in the gain map --gain map:0=0,1=1 (a judged item the run never retrieved`);
  });

  it('names judged items that occur nowhere in the run', () => {
    const dump = joined([{ query: 'q1', item: 'd1', label: NaN, score: 1 }], [{ query: 'q1', item: 'd1', grade: 1 }, { query: 'q1', item: 'd7', grade: 0 }]);
    expect(dump.notes.messages.join(' ')).toMatch(/1 judged items do not occur anywhere in the run/);
  });
});
