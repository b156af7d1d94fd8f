/**
 * Item bytes kept per row (model/rowTexts.ts) against the slow obvious way, on seeded random rows:
 * query-scoped keys against a Map of item text per query (the first row naming it), dump-wide ids
 * against interning every row's item in turn in a Map (first seen, first id), whether the rows of a
 * query are together or scattered, and whether the records come in one part or several. Then the same
 * through the CSV reader, and scoring's duplicate count against a Set per query.
 */
import { describe, expect, it } from 'vitest';
import { BytePool } from '../../extension/engine/model/bytePool';
import { RowTexts } from '../../extension/engine/model/rowTexts';
import { readDump } from '../../extension/engine/readers/index';
import { evaluateDump } from '../../extension/engine/index';
import { engineActivity } from '../../extension/engine/config';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { TempDir } from './fixtures/readers/tempFiles';
import { seededRandom } from '../reference/random';
import { hashes, randomCase, slowKeys, textsOf, type Case } from './rowTextsCases';

const tmp = new TempDir();

describe('item bytes per row', () => {
  it.each([
    [1, 5_000, true, 1], [2, 5_000, false, 1], [3, 5_000, true, 3], [4, 5_000, false, 4], [5, 3, true, 2], [6, 1, false, 1],
  ])('seed %i, %i rows, grouped %s, %i parts: keys and ids as the slow way gives them', (seed, rows, grouped, parts) => {
    const c = randomCase(seed, rows, grouped);
    const texts = textsOf(c, parts);
    expect(texts.size).toBe(rows);
    for (let r = 0; r < rows; r++) expect(texts.text(r)).toBe(c.items[r]);

    const keys = hashes(c);
    texts.queryScopedKeys(c.query, keys, c.queryCount);
    expect(Array.from(keys)).toEqual(slowKeys(c));

    const ids = new Map<string, number>();
    const expected = c.items.map((item) => {
      if (!ids.has(item)) ids.set(item, ids.size);
      return ids.get(item)!;
    });
    const all = texts.internAll();
    expect(Array.from(all.ids)).toEqual(expected);
    expect(all.pool.size).toBe(ids.size);
    for (const [item, id] of ids) expect(all.pool.get(id)).toBe(item);
    // The pool is an ordinary BytePool: found by text, and it takes new ids (judgments add items).
    expect(all.pool).toBeInstanceOf(BytePool);
    expect(all.pool.find(c.items[0]!)).toBe(0);
  });

  it('a cleared store holds only the records added after, keys and ids as a fresh one gives (a stream thread reuses one per block)', () => {
    const first = randomCase(8, 3_000, true);
    const next = randomCase(9, 1_000, true);
    const texts = new RowTexts(16, 4);
    const bytes = new TextEncoder();
    for (const item of first.items) texts.add(...withRange(bytes.encode(item)));
    texts.clear();
    expect(texts.size).toBe(0);
    for (const item of next.items) texts.add(...withRange(bytes.encode(item)));
    expect(texts.size).toBe(next.items.length);
    for (let r = 0; r < next.items.length; r++) expect(texts.text(r)).toBe(next.items[r]);
    const keys = hashes(next);
    texts.queryScopedKeys(next.query, keys, next.queryCount);
    expect(Array.from(keys)).toEqual(slowKeys(next));
    expect(texts.internAll().pool.size).toBe(new Set(next.items).size);
  });

  // Queries up to 4096 rows probe a table eight times their size, longer ones a table twice theirs: both
  // sides of that line, mostly distinct items with repeats among them, against the slow way.
  it.each([[4096], [4097], [9000]])('one query of %i rows keys as the slow way gives it', (rows) => {
    const rnd = seededRandom(rows);
    const items = Array.from({ length: rows }, (_, r) => (rnd() < 0.1 ? `sku-${Math.floor(rnd() * 30)}` : `sku-unique-${r}`));
    const c: Case = { query: new Uint32Array(rows), items, queryCount: 1 };
    const texts = textsOf(c, 1);
    const keys = hashes(c);
    texts.queryScopedKeys(c.query, keys, 1);
    expect(Array.from(keys)).toEqual(slowKeys(c));
  });

  it('keys can collide on the hash without merging items', () => {
    // Every row given the same hash: only the byte comparison can tell the items apart.
    const c = randomCase(7, 2_000, true);
    const texts = textsOf(c, 1);
    const keys = new Uint32Array(c.items.length).fill(12345);
    texts.queryScopedKeys(c.query, keys, c.queryCount);
    expect(Array.from(keys)).toEqual(slowKeys(c));
  });
});

describe('a CSV read keeps item bytes per row', () => {
  it.each([[21, true], [22, false]])('seed %i (grouped %s): item ids, keys and repeated rows as the slow way finds them', async (seed, grouped) => {
    const c = randomCase(seed, 4_000, grouped);
    const rnd = seededRandom(seed + 100);
    const lines = ['query,item,label,score'];
    // Items with a comma or quote would be quoted; the alphabet has none. The query text is its id.
    c.items.forEach((item, r) => lines.push(`q${c.query[r]},${item},${Math.floor(rnd() * 4)},${(rnd() * 10).toFixed(3)}`));
    const dump = await readDump(tmp.file(`rowtexts-${seed}.csv`, lines.join('\n') + '\n'));
    expect(dump.itemKey).toBeDefined();
    // Scoring reads the query-scoped keys only: the dump-wide ids are made when first read, once.
    const made = engineActivity().itemIdsMade;
    const evaluation = await evaluateDump(dump, parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS, { threads: 1 });
    expect(engineActivity().itemIdsMade).toBe(made);
    // Keys: the first row of the query naming the item (query ids of the file are q0, q1, ... in first-seen order).
    expect(Array.from(dump.itemKey!)).toEqual(slowKeys({ ...c, query: dump.query }));
    const ids = new Map<string, number>();
    expect(Array.from(dump.item)).toEqual(c.items.map((item) => {
      if (!ids.has(item)) ids.set(item, ids.size);
      return ids.get(item)!;
    }));
    for (const [item, id] of ids) expect(dump.items.get(id)).toBe(item);
    expect(engineActivity().itemIdsMade).toBe(made + 1);
    const perQuery = new Map<number, Set<string>>();
    let repeated = 0;
    c.items.forEach((item, r) => {
      const seen = perQuery.get(c.query[r]!) ?? new Set<string>();
      perQuery.set(c.query[r]!, seen);
      if (seen.has(item)) repeated++;
      seen.add(item);
    });
    expect(repeated).toBeGreaterThan(0);
    expect(evaluation.degenerate.duplicateRows).toBe(repeated);
  });
});

function withRange(bytes: Uint8Array): [Uint8Array, number, number] {
  return [bytes, 0, bytes.length];
}
