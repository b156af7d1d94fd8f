import { describe, expect, it } from 'vitest';
import { MapStringPool } from '../../extension/engine/model/stringPool';
import { emptyNotes, type RankedDump } from '../../extension/engine/model/dump';
import { groupByQuery } from '../../extension/engine/model/groups';
import type { Evaluation } from '../../extension/engine/evaluate/types';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { QueryTable, lossShares } from '../../extension/worker/queryTable';
import { seededRandom } from '../reference/random';

const QUERIES = ['cordless drill 18v', 'wood screws 4x40', 'hammer', 'drill bits', 'paint roller', 'garden hose 25m'];

/** One row per query is enough for the table; metric values are made up, some skipped (NaN). */
function fixture(queryCount: number, seed: number) {
  const random = seededRandom(seed);
  const queries = new MapStringPool();
  const items = new MapStringPool();
  const aisles = new MapStringPool();
  const n = queryCount;
  const query = new Uint32Array(n);
  const aisle = new Uint32Array(n);
  for (let q = 0; q < n; q++) {
    query[q] = queries.intern(q < QUERIES.length ? QUERIES[q]! : `query ${q}`);
    aisle[q] = aisles.intern(['tools', 'garden', 'paint'][Math.floor(random() * 3)]!);
  }
  const dump: RankedDump = {
    path: 'run.csv', format: 'csv', stamp: { size: 0, mtimeMs: 0 }, rowCount: n, query,
    item: Uint32Array.from({ length: n }, (_, i) => items.intern(`sku-${i}`)),
    label: new Float64Array(n), score: new Float64Array(n), line: new Uint32Array(n), offset: new Float64Array(n),
    queries, items, segments: [{ name: 'aisle', values: aisles, ofRow: aisle }], notes: emptyNotes(),
  };
  // Coarse values so ties happen and the tie-break rule is exercised.
  const ndcg = Float64Array.from({ length: n }, () => (random() < 0.1 ? NaN : Math.round(random() * 10) / 10));
  const ap = Float64Array.from({ length: n }, () => random());
  const evaluation: Evaluation = {
    conventions: DEFAULT_CONVENTIONS,
    metrics: [{ name: 'ndcg', k: 10, key: 'ndcg@10' }, { name: 'ap', key: 'ap' }],
    headline: 0,
    queryCount: n,
    perQuery: {
      items: Uint32Array.from({ length: n }, () => 1 + Math.floor(random() * 50)),
      relevant: Uint32Array.from({ length: n }, () => Math.floor(random() * 5)),
      values: [ndcg, ap],
      inversions: Float64Array.from({ length: n }, () => Math.floor(random() * 20)),
      inversionCost: Float64Array.from({ length: n }, () => random()),
      skipped: Uint8Array.from(ndcg, (v) => (Number.isNaN(v) ? 1 : 0)),
    },
    summary: [], degenerate: { singleItemQueries: 0, noRelevantQueries: 0, duplicateRows: 0, missingScoreRows: 0, unjudgedRows: 0, tiedScoreRows: 0 },
    sensitivity: [], warnings: [],
  };
  return { dump, evaluation, groups: groupByQuery(dump) };
}

describe('lossShares', () => {
  it('divides each loss by the total over counted queries (hand-derived)', () => {
    // Losses 0.5, 0.25, 0 (skipped NaN left out) → total 0.75.
    const shares = lossShares(Float64Array.of(0.5, 0.75, NaN, 1));
    expect(shares[0]).toBeCloseTo(2 / 3, 12);
    expect(shares[1]).toBeCloseTo(1 / 3, 12);
    expect(shares[2]).toBeNaN();
    expect(shares[3]).toBe(0);
  });

  it('is NaN everywhere when every query is perfect (no loss to share)', () => {
    expect(Array.from(lossShares(Float64Array.of(1, 1)))).toEqual([NaN, NaN]);
  });
});

describe('QueryTable', () => {
  it('defaults to the headline ascending, worst first, skipped last', () => {
    const source = fixture(300, 1);
    const page = new QueryTable(source).page({ offset: 0, limit: 1000 });
    expect(page.total).toBe(300);
    const values = page.rows.map((r) => r.values[0]);
    const firstNull = values.indexOf(null);
    expect(firstNull).toBeGreaterThan(0);
    expect(values.slice(firstNull).every((v) => v === null)).toBe(true);
    const present = values.slice(0, firstNull) as number[];
    expect(present).toEqual([...present].sort((a, b) => a - b));
    expect(page.rows.every((r, i) => r.index === i)).toBe(true);
  });

  it('agrees with a slow sort+filter for random sorts, filters and segments (seeded)', () => {
    const source = fixture(500, 7);
    const table = new QueryTable(source);
    const random = seededRandom(99);
    const keys = ['ndcg@10', 'ap', 'items', 'relevant', 'inversions', 'inversionCost', 'lossShare'];
    for (let trial = 0; trial < 60; trial++) {
      const key = keys[Math.floor(random() * keys.length)]!;
      const descending = random() < 0.5;
      const filter = random() < 0.3 ? String(Math.floor(random() * 10)) : '';
      const segment = random() < 0.3 ? { column: 'aisle', value: ['tools', 'garden', 'paint'][trial % 3]! } : undefined;
      const offset = Math.floor(random() * 100);
      const page = table.page({ sort: { key, descending }, filter, segment, offset, limit: 25 });

      // Obviously-correct reference: objects, filter, stable sort with missing values last.
      const column = (q: number): number => {
        const row = table.row(q, 0);
        const v = key === 'ndcg@10' ? row.values[0] : key === 'ap' ? row.values[1] : (row as unknown as Record<string, number | null>)[key];
        return v === null || v === undefined ? NaN : v;
      };
      const all = Array.from({ length: 500 }, (_, q) => q).filter((q) => {
        if (filter && !source.dump.queries.get(q).toLowerCase().includes(filter)) return false;
        if (segment && source.dump.segments[0]!.values.get(source.dump.segments[0]!.ofRow[q]!) !== segment.value) return false;
        return true;
      });
      const present = all.filter((q) => !Number.isNaN(column(q)));
      const missing = all.filter((q) => Number.isNaN(column(q)));
      present.sort((a, b) => (descending ? column(b) - column(a) : column(a) - column(b)) || a - b);
      const expected = [...present, ...missing].slice(offset, offset + 25).map((q) => source.dump.queries.get(q));
      expect(page.total).toBe(all.length);
      expect(page.rows.map((r) => r.query)).toEqual(expected);
    }
  });

  it('sorts query names in natural order and filters case-insensitively', () => {
    const table = new QueryTable(fixture(12, 3));
    const names = table.page({ sort: { key: 'query', descending: false }, filter: 'QUERY', offset: 0, limit: 50 }).rows.map((r) => r.query);
    expect(names).toEqual(['query 6', 'query 7', 'query 8', 'query 9', 'query 10', 'query 11']);
    expect(table.page({ filter: 'DRILL', offset: 0, limit: 50 }).rows.map((r) => r.query).sort()).toEqual(['cordless drill 18v', 'drill bits']);
  });

  it('clamps offsets and limits, and an unknown segment value gives an empty page', () => {
    const table = new QueryTable(fixture(20, 4));
    expect(table.page({ offset: 50, limit: 10 })).toMatchObject({ total: 20, offset: 20, rows: [] });
    expect(table.page({ offset: -5, limit: 3 }).rows).toHaveLength(3);
    expect(table.page({ segment: { column: 'aisle', value: 'plumbing' }, offset: 0, limit: 10 }).total).toBe(0);
    expect(() => table.page({ sort: { key: 'nope', descending: false }, offset: 0, limit: 1 })).toThrow("unknown sort key 'nope'");
  });

  it('rows carry the loss share; shares of counted queries sum to 1', () => {
    const table = new QueryTable(fixture(200, 5));
    const rows = table.page({ offset: 0, limit: 1000 }).rows;
    const sum = rows.reduce((s, r) => s + (r.lossShare ?? 0), 0);
    expect(sum).toBeCloseTo(1, 10);
    expect(rows.filter((r) => r.skipped).every((r) => r.lossShare === null && r.values[0] === null)).toBe(true);
  });
});
