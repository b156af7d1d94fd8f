/**
 * A (query, item) pair judged twice is refused, naming the first repeat in file order and the judgment it
 * repeats. Judgments grouped by query take a fast path (per-item marks); any other order takes the pair
 * index. Seeded tables with and without repeats: both give the same answer on every grouped table.
 * Likewise the judgment of each row: found by query runs in a grouped dump, by a pair index otherwise.
 */
import { describe, expect, it } from 'vitest';
import { BytePool } from '../../extension/engine/model/bytePool';
import { joinJudgments, type JudgmentTable } from '../../extension/engine/readers/judgments';
import type { RankedDump } from '../../extension/engine/model/dump';
import { evaluateDump } from '../../extension/engine/index';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { DEFAULT_METRICS } from '../../extension/engine/metrics/registry';
import { plainEvaluation } from './fixtures/plainEvaluation';
import { firstRepeatAnyOrder, firstRepeatGrouped, isGrouped, judgmentsByPair, judgmentsByQueryRun, judgmentsByRowQuery } from '../../extension/engine/readers/judgmentMatch';
import { readDump, readJudgments } from '../../extension/engine/readers/index';
import { TempDir } from './fixtures/readers/tempFiles';
import { groupedDump, judgmentsFor } from './fixtures/streamFiles';
import { seededRandom } from '../reference/random';

/** Judgments grouped by query (ids in first-seen order), items drawn from a small catalogue so they recur across queries. */
function groupedTable(seed: number, repeats: number): JudgmentTable {
  const rand = seededRandom(seed);
  const queries = new BytePool();
  const items = new BytePool();
  const query: number[] = [];
  const item: number[] = [];
  for (let q = 0; q < 40; q++) {
    queries.internString(`q${q}`);
    const picked = new Set<number>();
    const size = 1 + Math.floor(rand() * 12);
    while (picked.size < size) picked.add(Math.floor(rand() * 60));
    for (const i of picked) {
      query.push(q);
      item.push(items.internString(`sku-${i}`));
    }
  }
  // Repeats: a judgment copied to a later place within its own query's run.
  for (let k = 0; k < repeats; k++) {
    const j = Math.floor(rand() * query.length);
    let end = j;
    while (end < query.length && query[end] === query[j]) end++;
    const at = j + 1 + Math.floor(rand() * (end - j));
    query.splice(at, 0, query[j]!);
    item.splice(at, 0, item[j]!);
  }
  const n = query.length;
  return { path: 'j', queries, items, query: Uint32Array.from(query), item: Uint32Array.from(item), grade: new Float64Array(n), line: Uint32Array.from({ length: n }, (_, j) => j + 1) };
}

/** The slow obvious answer: for each judgment in file order, look back for the same pair. */
function firstRepeatSlow(t: JudgmentTable): [number, number] | undefined {
  for (let j = 0; j < t.grade.length; j++) {
    for (let e = 0; e < j; e++) if (t.query[e] === t.query[j] && t.item[e] === t.item[j]) return [e, j];
  }
  return undefined;
}

describe('judgments judged twice', () => {
  it('the grouped fast path and the pair index name the same first repeat as the slow search, on seeded tables', () => {
    let found = 0;
    for (let seed = 1; seed <= 60; seed++) {
      const t = groupedTable(seed, seed % 3);
      expect(isGrouped(t.query)).toBe(true);
      const slow = firstRepeatSlow(t);
      if (slow) found++;
      expect(firstRepeatGrouped(t, t.items.size)).toEqual(slow);
      expect(firstRepeatAnyOrder(t)).toEqual(slow);
    }
    expect(found).toBeGreaterThan(20);
  });

  it('tells grouped judgments from others', () => {
    expect(isGrouped(Uint32Array.from([0, 0, 1, 2, 2]))).toBe(true);
    expect(isGrouped(Uint32Array.from([0, 1, 0]))).toBe(false);
    expect(isGrouped(Uint32Array.from([0, 2, 1]))).toBe(false);
  });
});

describe('the judgment of each row', () => {
  it('found by query runs (grouped dumps) is the pair index\'s, row for row, on seeded dumps and judgments', async () => {
    const tmp = new TempDir();
    try {
      for (const seed of [1, 2, 3, 4]) {
        const text = groupedDump(seed, { queries: 80, maxRows: 12, duplicateShare: 0.1 });
        const file = tmp.file(`runs-${seed}.tsv`, text);
        const table = await readJudgments(tmp.file(`runs-${seed}.judgments.tsv`, judgmentsFor(text, seed + 50, { unretrievedPerQuery: 3 })));
        const dump = await readDump(file);
        expect(isGrouped(dump.query)).toBe(true);
        const queryInDump = Int32Array.from({ length: table.queries.size }, (_, q) => dump.queries.find(table.queries.get(q)));
        const itemInDump = Int32Array.from({ length: table.items.size }, (_, i) => dump.items.find(table.items.get(i)));
        const ids = { rowQuery: dump.query, rowItem: dump.item, itemCount: dump.items.size, judgments: table.grade.length,
          queryOf: (j: number) => queryInDump[table.query[j]!]!, itemOf: (j: number) => itemInDump[table.item[j]!]! };
        const byRun = judgmentsByQueryRun(ids, judgmentsByRowQuery(ids));
        expect([...byRun]).toEqual([...judgmentsByPair(ids)]);
        // Not a vacuous match: most rows are judged, some are not.
        const judged = byRun.filter((j) => j >= 0).length;
        expect(judged).toBeGreaterThan(dump.rowCount / 2);
        expect(judged).toBeLessThan(dump.rowCount);
      }
    } finally {
      tmp.remove();
    }
  });
});

describe('joining a dump by its item bytes', () => {
  it('gives the join by dump-wide item ids exactly: labels, notes, side table, item pool and numbers, under skip and zero', async () => {
    const tmp = new TempDir();
    try {
      for (const seed of [5, 6, 7]) {
        const text = groupedDump(seed, { queries: 70, maxRows: 10, duplicateShare: 0.1, unjudgedShare: 0.05 });
        const file = tmp.file(`bytes-${seed}.tsv`, text);
        const table = await readJudgments(tmp.file(`bytes-${seed}.judgments.tsv`, judgmentsFor(text, seed + 70, { unretrievedPerQuery: 3 })));
        for (const policy of ['skip', 'zero'] as const) {
          const fresh = await readDump(file);
          expect(fresh.itemTexts).toBeDefined();
          const byBytes = joinJudgments(fresh, table, policy);
          // The same rows with dump-wide item ids made first (a spread makes them) and no item bytes: the other path.
          const withIds = await readDump(file);
          const byIds = joinJudgments({ ...withIds, itemTexts: undefined }, table, policy);
          expect(byBytes.unretrieved!.items).toBeDefined();
          expect(byIds.unretrieved!.items).toBeUndefined();
          expect([...byBytes.label]).toEqual([...byIds.label]);
          expect(byBytes.notes).toEqual(byIds.notes);
          const side = (d: RankedDump) => {
            const s = d.unretrieved!;
            return { start: [...s.start], grade: [...s.grade], line: [...s.line], first: s.firstAbsentQuery, items: [...s.item].map((i) => (s.items ?? d.items).get(i)) };
          };
          expect(side(byBytes)).toEqual(side(byIds));
          expect(byBytes.unretrieved!.grade.length).toBeGreaterThan(0);
          const metrics = parseMetricList(DEFAULT_METRICS);
          expect(plainEvaluation(await evaluateDump(byBytes, metrics, DEFAULT_CONVENTIONS, { threads: 1 })))
            .toEqual(plainEvaluation(await evaluateDump(byIds, metrics, DEFAULT_CONVENTIONS, { threads: 1 })));
          // Made afterwards, the dump's item ids and pool are those of the other path, judged-only items included.
          const names = (d: RankedDump) => Array.from({ length: d.items.size }, (_, i) => d.items.get(i));
          expect(names(byBytes)).toEqual(names(byIds));
          expect([...byBytes.item]).toEqual([...byIds.item]);
        }
      }
    } finally {
      tmp.remove();
    }
  });
});
