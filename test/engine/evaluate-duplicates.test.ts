/**
 * Duplicate (query, item) rows are found with a small per-query hash set. Its hard cases: long
 * queries (the set grows), random ids (slots collide), ids spaced by powers of two, and an item
 * repeated many times; the counts must match a plain Set.
 */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { seededRandom } from '../reference/random';
import type { RankedDump } from '../../extension/engine/model/dump';
import { buildDump, type TestRow } from './dumpBuilder';

describe('duplicate rows', () => {
  it('counts duplicates as a Set does, in long queries with colliding ids', () => {
    const rnd = seededRandom(41);
    const rows: TestRow[] = [];
    // The first query names every item, so the ids of later queries' items are spread over a wide range.
    const ITEMS = 100_000;
    for (let i = 0; i < ITEMS; i++) rows.push({ query: 'warm-up', item: `sku-${i}`, label: i % 2, score: rnd() });
    const expectedDuplicates: number[] = [];
    for (const [q, n, spacing] of [['random', 3000, 0], ['long', 3000, 1], ['spaced', 600, 256], ['pow2', 300, 1024], ['one item', 50, 1]] as const) {
      const seen = new Set<string>();
      let duplicates = 0;
      for (let i = 0; i < n; i++) {
        const id = q === 'one item' ? 7 : spacing === 0 ? Math.floor(rnd() * ITEMS) : (i * spacing) % ITEMS;
        const item = `sku-${rnd() < 0.1 ? (id + spacing) % ITEMS : id}`;
        if (seen.has(item)) duplicates++;
        seen.add(item);
        rows.push({ query: q, item, label: i % 3, score: rnd() });
      }
      expectedDuplicates.push(duplicates);
    }
    const ev = evaluate(buildDump(rows), parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS);
    const total = expectedDuplicates.reduce((a, b) => a + b, 0);
    expect(total).toBeGreaterThan(100);
    expect(ev.degenerate.duplicateRows).toBe(total);
    // Items per query are the distinct items.
    expect(Array.from(ev.perQuery.items)).toEqual([ITEMS, ...[3000, 3000, 600, 300, 50].map((n, k) => n - expectedDuplicates[k]!)]);
  });
});

/** Query-scoped keys the slow obvious way: each row's key is the first row of its query naming the same item. */
function firstRowKeys(dump: RankedDump): Uint32Array {
  const first = new Map<string, number>();
  return Uint32Array.from(dump.query, (q, r) => {
    const key = `${q}\u0000${dump.item[r]}`;
    if (!first.has(key)) first.set(key, r);
    return first.get(key)!;
  });
}

describe('repeated items found through query-scoped keys', () => {
  it('scores exactly as the per-query item set does, in grouped and interleaved files (seeded random)', () => {
    const rnd = seededRandom(77);
    for (const interleaved of [false, true]) {
      const rows: TestRow[] = [];
      for (let i = 0; i < 20_000; i++) {
        const q = interleaved ? Math.floor(rnd() * 300) : Math.floor(i / 70);
        // A few items per query, so repeats are common; some scores tied, some missing, some grades unjudged.
        rows.push({ query: `q${q}`, item: `sku-${Math.floor(rnd() * 60)}`, label: rnd() < 0.1 ? NaN : Math.floor(rnd() * 4),
          score: rnd() < 0.05 ? NaN : Math.round(rnd() * 20) / 4 });
      }
      const plain = buildDump(rows);
      const keyed = { ...plain, itemKey: firstRowKeys(plain) };
      const metrics = parseMetricList('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau');
      const a = evaluate(plain, metrics, DEFAULT_CONVENTIONS);
      const b = evaluate(keyed, metrics, DEFAULT_CONVENTIONS);
      expect(a.degenerate.duplicateRows).toBeGreaterThan(1000);
      expect(b.degenerate).toEqual(a.degenerate);
      expect(Array.from(b.perQuery.items)).toEqual(Array.from(a.perQuery.items));
      a.perQuery.values.forEach((column, m) => expect(Array.from(b.perQuery.values[m]!)).toEqual(Array.from(column)));
      expect(b.summary).toEqual(a.summary);
      expect(b.sensitivity).toEqual(a.sensitivity);
    }
  });
});
