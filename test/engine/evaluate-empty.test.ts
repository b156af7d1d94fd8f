/** Empty inputs: a dump without rows, and a query id with no rows (a judged query the run never ranked). */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { type MapStringPool } from '../../extension/engine/model/stringPool';
import { buildDump, queryRows } from './dumpBuilder';

describe('empty inputs', () => {
  it('a dump with no rows gives NaN means, zero counts and no crash', () => {
    const e = evaluate(buildDump([]), parseMetricList(DEFAULT_METRICS), DEFAULT_CONVENTIONS);
    expect(e.queryCount).toBe(0);
    for (const s of e.summary) {
      expect(s.mean).toBeNaN();
      expect(s.counted).toBe(0);
    }
    expect(e.sensitivity.every((r) => Number.isNaN(r.mean))).toBe(true);
  });

  it('a query with no rows counts as having no relevant item', () => {
    const dump = buildDump(queryRows('cordless drill 18v', [1, 0], [2, 1]));
    (dump.queries as MapStringPool).intern('tile cutter');
    for (const noRelevant of ['skip', 'zero'] as const) {
      const e = evaluate(dump, parseMetricList('ndcg@10,dcg@10,rbp,tau'), { ...DEFAULT_CONVENTIONS, noRelevant });
      expect(e.queryCount).toBe(2);
      expect(e.degenerate.noRelevantQueries).toBe(1);
      expect(e.perQuery.items[1]).toBe(0);
      expect(e.perQuery.values[0]![1]).toBe(noRelevant === 'skip' ? NaN : 0);
      if (noRelevant === 'zero') expect(e.perQuery.values[1]![1]).toBe(0);
      expect(e.warnings.join(' ')).toContain('no rows at all');
    }
    const d = queryDetail(dump, 1, DEFAULT_CONVENTIONS, 10);
    expect(d.positions).toEqual([]);
    expect(d.ndcg).toBeNaN();
  });
});

describe('query detail without a cut-off', () => {
  it('k = Infinity scores the whole list', () => {
    const dump = buildDump(queryRows('cordless drill 18v', [0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 2], [12, 11, 10, 9, 8, 7, 6, 5, 4, 3, 2, 1]));
    const d = queryDetail(dump, 0, DEFAULT_CONVENTIONS, Infinity);
    expect(d.ndcg).toBeCloseTo(1 / Math.log2(13), 14); // the one relevant item at position 12
    expect(d.values['ndcg']).toBeCloseTo(1 / Math.log2(13), 14);
  });
});
