/**
 * The metrics added through the registry alone (hit@k, judged@k) and AP@k's denominator, on values
 * derived by hand from their definitions; the seeded brute-force comparison over every order of every
 * tied group is in evaluate-random.test.ts (test/reference/slowMetrics.ts).
 */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { METRIC_DEFINITIONS, metricLabel } from '../../extension/engine/metrics/registry';
import { buildDump, type TestRow } from './dumpBuilder';

function single(rows: TestRow[], metrics: string, conventions: Conventions = DEFAULT_CONVENTIONS): Record<string, number> {
  const e = evaluate(buildDump(rows), parseMetricList(metrics), conventions);
  const out: Record<string, number> = {};
  e.metrics.forEach((m, i) => (out[m.key] = e.perQuery.values[i]![0]!));
  return out;
}

const row = (item: string, label: number, score: number): TestRow => ({ query: 'hammer drill', item, label, score });

describe('hit@k (common practice: 1 when a relevant item is in the top k)', () => {
  it('plain lists: relevant at position 3 gives hit@2 = 0, hit@3 = 1, hit = 1', () => {
    const rows = [row('a', 0, 0.9), row('b', 0, 0.8), row('c', 2, 0.7), row('d', 0, 0.6)];
    expect(single(rows, 'hit@2,hit@3,hit')).toEqual({ 'hit@2': 0, 'hit@3': 1, hit: 1 });
  });
  it('four tied items, one relevant, k = 2: 1 − C(3,2)/C(4,2) = 1 − 3/6 = 0.5 under ties average', () => {
    const rows = [row('a', 0, 1), row('b', 0, 1), row('c', 1, 1), row('d', 0, 1)];
    expect(single(rows, 'hit@2')['hit@2']).toBeCloseTo(0.5, 15);
  });
  it('one item above a tied group of five with two relevant, k = 3: 1 − C(3,2)/C(5,2) = 1 − 3/10 = 0.7', () => {
    const rows = [row('top', 0, 2), ...['a', 'b', 'c', 'd', 'e'].map((id, i) => row(id, i < 2 ? 3 : 0, 1))];
    expect(single(rows, 'hit@3')['hit@3']).toBeCloseTo(0.7, 15);
  });
  it('pessimistic ties put the relevant item last: hit@2 of the four tied items is 0', () => {
    const rows = [row('a', 0, 1), row('b', 0, 1), row('c', 1, 1), row('d', 0, 1)];
    expect(single(rows, 'hit@2', { ...DEFAULT_CONVENTIONS, ties: 'pessimistic' })['hit@2']).toBe(0);
  });
});

describe('judged@k (share of the top min(k, n) positions holding a judged item)', () => {
  it('unjudged at positions 2 and 4 of 4: judged@2 = 1/2, judged@10 = 2/4 (the list is shorter than k)', () => {
    const rows = [row('a', 1, 0.9), row('b', NaN, 0.8), row('c', 0, 0.7), row('d', NaN, 0.6)];
    const v = single(rows, 'judged@2,judged@10,judged@1');
    expect(v).toEqual({ 'judged@2': 0.5, 'judged@10': 0.5, 'judged@1': 1 });
  });
  it('a tied group of three with one unjudged, cut after one slot: 2/3 expected under ties average', () => {
    const rows = [row('a', 1, 1), row('b', NaN, 1), row('c', 0, 1)];
    expect(single(rows, 'judged@1')['judged@1']).toBeCloseTo(2 / 3, 15);
  });
});

describe('ap@k divides by min(k, R)', () => {
  it('relevant at 1 and 3, R = 3 (one more relevant at 5): ap@2 = 1/min(2,3), ap@3 = (1 + 2/3)/3, ap = (1 + 2/3 + 3/5)/3', () => {
    const rows = [row('a', 1, 5), row('b', 0, 4), row('c', 1, 3), row('d', 0, 2), row('e', 1, 1)];
    const v = single(rows, 'ap@2,ap@3,ap');
    expect(v['ap@2']).toBeCloseTo(1 / 2, 15);
    expect(v['ap@3']).toBeCloseTo((1 + 2 / 3) / 3, 15);
    expect(v.ap).toBeCloseTo((1 + 2 / 3 + 3 / 5) / 3, 15);
  });
});

describe('the registry', () => {
  it('gives every metric a label, explanation, formula, reference and tie rule', () => {
    for (const d of METRIC_DEFINITIONS) {
      expect(d.name, d.name).toMatch(/^[a-z]+$/);
      expect(d.label.length, d.name).toBeGreaterThan(0);
      for (const text of [d.explain('the top 10'), d.formula, d.reference, d.ties]) expect(text.length, d.name).toBeGreaterThan(10);
    }
    expect(metricLabel('ndcg@10')).toBe('NDCG@10');
    expect(metricLabel('tau')).toBe("Kendall's τ");
    expect(metricLabel('rbp_residual')).toBe('rbp_residual');
  });
  it('parses exactly the keys its entries allow', () => {
    for (const d of METRIC_DEFINITIONS) {
      expect(parseMetricList(d.name)[0]).toEqual({ name: d.name, key: d.name });
      if (d.cutoff === 'optional') expect(parseMetricList(`${d.name}@7`)[0]).toEqual({ name: d.name, k: 7, key: `${d.name}@7` });
      else expect(() => parseMetricList(`${d.name}@7`)).toThrow(/without a cut-off/);
    }
    expect(() => parseMetricList('mrr@10')).toThrow(/hit or hit@k, judged or judged@k/);
  });
  it('states AP@k\'s denominator in the report notes, and only for a cut-off', () => {
    const rows = [row('a', 1, 2), row('b', 0, 1)];
    const notes = evaluate(buildDump(rows), parseMetricList('ap@5,ap'), DEFAULT_CONVENTIONS).warnings;
    expect(notes.filter((n) => n.includes('min('))).toEqual([
      'ap@5 divides the summed precision by min(5, relevant items of the query), so a top 5 of only relevant items scores 1.',
    ]);
  });
});
