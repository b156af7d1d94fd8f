/**
 * Grouping and keying rows not grouped by query in parts (threads/keyUngrouped.ts), against the slow
 * obvious keys (the first row of the query naming the item, from a Map) and the one-pass grouping:
 * the counting sort split between two threads gives the same rows in the same order, keys made from the
 * hashes alone hand back exactly the queries whose rows share a hash, and a grouping made while reading
 * serves scoring only for the very query column it was made from.
 */
import { describe, expect, it } from 'vitest';
import { countRowsPerQuery, groupByQuery, groupRows, placeRows, rememberGroups, sharedColumn, usableValues } from '../../extension/engine/model/groups';
import { keyGroupsByHash } from '../../extension/engine/model/itemProbe';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import { RowColumns } from '../../extension/engine/readers/columns';
import { keyUngroupedRows, runGroupTask } from '../../extension/engine/threads/keyUngrouped';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { hashes, randomCase, slowKeys, textsOf, type Case } from './rowTextsCases';

const tmp = new TempDir();

/** Mostly distinct items (sku-<row>), with a repeat of an earlier item of the query in about `repeats` of the rows. */
function mostlyDistinct(seed: number, rows: number, repeats: number): Case {
  const c = randomCase(seed, rows, false);
  const rnd = seededRandom(seed + 1);
  const lastOf = new Map<number, string>();
  const items = c.items.map((_, r) => {
    const q = c.query[r]!;
    const item = rnd() < repeats && lastOf.has(q) ? lastOf.get(q)! : `sku-${r}`;
    lastOf.set(q, item);
    return item;
  });
  return { ...c, items };
}

describe('grouping in two parts', () => {
  it.each([[1, 5_000], [2, 1], [3, 2], [4, 777]])('seed %i, %i rows: counts and places split at any row give the one-pass grouping', (seed, rows) => {
    const c = randomCase(seed, rows, false);
    const whole = groupRows(c.query, rows, c.queryCount, (n) => new Uint32Array(n));
    for (const mid of [0, rows >> 1, rows]) {
      const start = new Uint32Array(c.queryCount + 1);
      const theirs = new Uint32Array(c.queryCount);
      countRowsPerQuery(c.query, 0, mid, start.subarray(1));
      countRowsPerQuery(c.query, mid, rows, theirs);
      let before = 0;
      for (let q = 0; q < c.queryCount; q++) {
        const mine = start[q + 1]!;
        const other = theirs[q]!;
        start[q] = before;
        theirs[q] = before + mine;
        before += mine + other;
      }
      start[c.queryCount] = rows;
      const out = new Uint32Array(rows);
      placeRows(c.query, mid, rows, theirs, out);
      placeRows(c.query, 0, mid, start.slice(0, c.queryCount), out);
      expect(Array.from(start)).toEqual(Array.from(whole.start));
      // A scattered case has a row order; a grouped one (1 or 2 rows) may have none.
      expect(Array.from(out)).toEqual(Array.from(whole.rowsOfQuery ?? out));
    }
  });
});

describe('keys from the hashes alone', () => {
  it.each([[11, 0], [12, 0.02], [13, 0.3]])('seed %i, repeats in %f of the rows: the queries left are those with a shared hash, the rest keyed', (seed, repeats) => {
    const c = mostlyDistinct(seed, 6_000, repeats);
    const groups = groupRows(c.query, c.items.length, c.queryCount, sharedColumn);
    const column = hashes(c);
    const before = Uint32Array.from(column);
    const left = keyGroupsByHash(column, groups, 0, c.queryCount);
    const expected = slowKeys(c);
    const sharesHash = (q: number) => {
      const seen = new Set<number>();
      for (let p = groups.start[q]!; p < groups.start[q + 1]!; p++) {
        const h = before[groups.rowsOfQuery![p]!]!;
        if (seen.has(h)) return true;
        seen.add(h);
      }
      return false;
    };
    const shouldLeave = Array.from({ length: c.queryCount }, (_, q) => q).filter(sharesHash);
    expect(left).toEqual(shouldLeave);
    if (repeats > 0) expect(left.length).toBeGreaterThan(0);
    const leftSet = new Set(left);
    for (let r = 0; r < c.items.length; r++) {
      // A query left keeps its hashes (a thread with the bytes keys it); the others have the slow keys.
      expect(column[r]).toBe(leftSet.has(c.query[r]!) ? before[r] : expected[r]);
    }
    // The thread with the bytes finishes the queries left: every key is then the slow one.
    const texts = textsOf(c, 2);
    for (const q of left) texts.keyGroups(column, groups, q, q + 1);
    expect(Array.from(column)).toEqual(expected);
  });

  it('every row given one hash: every query of two rows or more is left with its hashes, in query order', () => {
    const c = mostlyDistinct(14, 3_000, 0);
    const groups = groupRows(c.query, c.items.length, c.queryCount, sharedColumn);
    const column = new Uint32Array(c.items.length).fill(4242);
    const left = keyGroupsByHash(column, groups, 0, c.queryCount);
    const sizes = Array.from({ length: c.queryCount }, (_, q) => groups.start[q + 1]! - groups.start[q]!);
    expect(left).toEqual(sizes.flatMap((n, q) => (n >= 2 ? [q] : [])));
    for (let r = 0; r < c.items.length; r++) expect(column[r]).toBe(sizes[c.query[r]!]! >= 2 ? 4242 : r);
  });
});

describe('keyUngroupedRows', () => {
  /** Rows of `c` in shared columns, as a parallel read's compaction leaves them (items hold their hashes). */
  function rowsOf(c: Case): RowColumns {
    const rows = new RowColumns([], c.items.length);
    rows.itemTexts = textsOf(c, 3);
    rows.query = sharedColumn(c.items.length);
    rows.query.set(c.query);
    rows.item = sharedColumn(c.items.length);
    rows.item.set(hashes(c));
    const rnd = seededRandom(c.items.length);
    rows.score = new Float64Array(new SharedArrayBuffer(c.items.length * 8)).map(() => (rnd() < 0.05 ? NaN : rnd()));
    rows.label = new Float64Array(new SharedArrayBuffer(c.items.length * 8)).map(() => (rnd() < 0.1 ? NaN : Math.floor(rnd() * 5)));
    rows.count = c.items.length;
    for (let q = 0; q < c.queryCount; q++) rows.queries.internString(`q${q}`);
    return rows;
  }

  it.each([[21, 0.01], [22, 0.5]])('seed %i: with a helper answering in turn, the keys and grouping of one thread', async (seed, repeats) => {
    const c = mostlyDistinct(seed, 8_000, repeats);
    const rows = rowsOf(c);
    const asked: string[] = [];
    await keyUngroupedRows(rows, async (task) => {
      asked.push(task.kind);
      return runGroupTask(task);
    });
    expect(asked).toEqual(['count', 'place', 'key']);
    expect(rows.itemKeysMade).toBe(true);
    expect(Array.from(rows.item.subarray(0, rows.count))).toEqual(slowKeys(c));
    const whole = groupRows(c.query, c.items.length, c.queryCount, (n) => new Uint32Array(n));
    expect(Array.from(rows.groups!.start)).toEqual(Array.from(whole.start));
    expect(Array.from(rows.groups!.rowsOfQuery!)).toEqual(Array.from(whole.rowsOfQuery!));
    // The values carried along: each position holds its row's score and grade, and whether its item comes first in its query.
    const values = rows.groups!.values!;
    const keys = slowKeys(c);
    const order = whole.rowsOfQuery!;
    expect(Array.from(values.score)).toEqual(Array.from(order, (r) => rows.score[r]));
    expect(Array.from(values.label)).toEqual(Array.from(order, (r) => rows.label[r]));
    expect(Array.from(values.first)).toEqual(Array.from(order, (r) => (keys[r] === r ? 1 : 0)));
    expect(values.first.includes(0)).toBe(true);
    // They serve scoring for these very columns only.
    const columns = { score: rows.score.subarray(0, rows.count), label: rows.label.subarray(0, rows.count), itemKey: rows.item.subarray(0, rows.count) };
    expect(usableValues(rows.groups!, columns).values).toBe(values);
    expect(usableValues(rows.groups!, { ...columns, label: Float64Array.from(columns.label) }).values).toBeUndefined();
    expect(usableValues(rows.groups!, { ...columns, score: columns.score.subarray(1) }).values).toBeUndefined();
    expect(usableValues(rows.groups!, { ...columns, itemKey: undefined }).values).toBeUndefined();
    expect(usableValues(rows.groups!, { ...columns, label: Float64Array.from(columns.label) }).rowsOfQuery).toBe(rows.groups!.rowsOfQuery);
  });

  it('leaves grouped rows to the reader (each range keyed them) and asks nothing', async () => {
    const c = randomCase(23, 2_000, true);
    const rows = rowsOf(c);
    await keyUngroupedRows(rows, () => Promise.reject(new Error('not asked')));
    expect(rows.itemKeysMade).toBe(false);
    expect(rows.groups).toBeUndefined();
  });
});

describe('a grouping made while reading', () => {
  it('serves groupByQuery for that query column, and not for another column or another query count', async () => {
    const c = mostlyDistinct(31, 3_000, 0.1);
    const lines = ['query,item,label,score', ...c.items.map((item, r) => `q${c.query[r]},${item},${r % 3},${(r % 17) / 4}`)];
    const dump = await readDump(tmp.file('scattered.csv', lines.join('\n') + '\n'), { threads: 1 });
    const first = groupByQuery(dump);
    expect(groupByQuery(dump)).toBe(first);
    expect(first.rowsOfQuery!.buffer).toBeInstanceOf(SharedArrayBuffer);
    const fresh = groupRows(dump.query, dump.rowCount, dump.queries.size, (n) => new Uint32Array(n));
    expect(Array.from(first.start)).toEqual(Array.from(fresh.start));
    expect(Array.from(first.rowsOfQuery!)).toEqual(Array.from(fresh.rowsOfQuery!));
    // A copy of the column is grouped afresh; so is the same column under more queries (judged queries added).
    expect(groupByQuery({ ...dump, query: Uint32Array.from(dump.query) })).not.toBe(first);
    const more = { ...dump, queries: { size: dump.queries.size + 2 } } as unknown as RankedDump;
    const regrouped = groupByQuery(more);
    expect(regrouped).not.toBe(first);
    expect(regrouped.start).toHaveLength(dump.queries.size + 3);
    // Remembered by column: a grouping remembered for a column is what groupByQuery gives for it.
    const column = Uint32Array.from(dump.query);
    rememberGroups(column, fresh);
    expect(groupByQuery({ ...dump, query: column })).toBe(fresh);
  });
});
