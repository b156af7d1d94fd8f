/**
 * The merge of a parallel read decides from the ranges' query id maps alone whether the merged query
 * column is grouped (mergeRanges.ts); the slow obvious answer builds the merged column and scans it
 * (isGrouped). Ranges are made as a parallel read makes them: each grouped on its own, its queries
 * interned in local first-seen order into one pool in file order. Also the moves that put ranges
 * together, against mapping each range by hand, and the shrinking range sizes.
 */
import { describe, expect, it } from 'vitest';
import { isGrouped } from '../../extension/engine/model/rowTexts';
import { mergedStaysGrouped } from '../../extension/engine/threads/mergeRanges';
import { compactColumns, shiftOf } from '../../extension/engine/threads/compactRanges';
import { shrinkingEnds } from '../../extension/engine/threads/shrinkingShares';
import { seededRandom } from '../reference/random';

/** Random ranges of a file: per range, its rows' local query ids and the map of local ids to merged ids. */
function randomRanges(rnd: () => number, names: number) {
  const pool = new Map<string, number>();
  const merged: number[] = [];
  const maps: Uint32Array[] = [];
  let lastName = '';
  for (let k = 0, ranges = 1 + Math.floor(rnd() * 5); k < ranges; k++) {
    const local: string[] = [];
    // A range may start with the query the range before ended on (a query cut by the range's start).
    if (lastName !== '' && rnd() < 0.5) local.push(lastName);
    for (let q = 0, more = Math.floor(rnd() * 4); q < more; q++) {
      const name = `q${Math.floor(rnd() * names)}`;
      if (!local.includes(name)) local.push(name);
    }
    maps.push(Uint32Array.from(local, (name) => {
      if (!pool.has(name)) pool.set(name, pool.size);
      return pool.get(name)!;
    }));
    // Each local query's rows together, in local order: the range is grouped on its own.
    local.forEach((_, id) => {
      for (let r = 0, rows = 1 + Math.floor(rnd() * 3); r < rows; r++) merged.push(maps[k]![id]!);
    });
    if (local.length > 0) lastName = local.at(-1)!;
  }
  return { maps, merged: Uint32Array.from(merged) };
}

describe('whether ranges merge into a grouped file', () => {
  it('agrees with a scan of the merged column (seeded random ranges, returning queries common)', () => {
    const rnd = seededRandom(2026);
    let grouped = 0;
    for (let trial = 0; trial < 5000; trial++) {
      const { maps, merged } = randomRanges(rnd, 2 + Math.floor(rnd() * 12));
      const expected = isGrouped(merged, merged.length);
      expect(mergedStaysGrouped(maps), `maps ${maps.map((m) => Array.from(m).join(' ')).join(' | ')}`).toBe(expected);
      if (expected) grouped++;
    }
    // Both answers are common, so neither half of the check is empty.
    expect(grouped).toBeGreaterThan(500);
    expect(grouped).toBeLessThan(4500);
  });

  it('hand-made cases: a range starting on the query the file left, on the next new one, on an old one', () => {
    const maps = (...ranges: number[][]) => ranges.map((r) => Uint32Array.from(r));
    expect(mergedStaysGrouped(maps([0, 1], [1, 2]))).toBe(true);
    expect(mergedStaysGrouped(maps([0, 1], [2], [], [2, 3]))).toBe(true);
    expect(mergedStaysGrouped(maps([0, 1], [0]))).toBe(false);
    expect(mergedStaysGrouped(maps([0, 1], [3]))).toBe(false);
    expect(mergedStaysGrouped(maps([0, 1], [2, 0]))).toBe(false);
  });
});

describe('moving ranges together (compactRanges.ts)', () => {
  // The slow obvious answer: each range's ids through its map (or plus its number), one range after another.
  it('matches mapping range by range, whether a map is a shift or not (seeded random ranges)', () => {
    const rnd = seededRandom(77);
    let shifts = 0;
    for (let trial = 0; trial < 300; trial++) {
      const ranges = 1 + Math.floor(rnd() * 5);
      const counts: number[] = [];
      const firstRows: number[] = [];
      const maps: Uint32Array[] = [];
      const expected: number[] = [];
      const values: number[] = [];
      for (let k = 0; k < ranges; k++) {
        firstRows.push(values.length);
        const count = Math.floor(rnd() * 6);
        counts.push(count);
        const ids = 1 + Math.floor(rnd() * 4);
        const start = Math.floor(rnd() * 5);
        // Half the maps are consecutive ids (a shift), the rest any ids.
        const map = Uint32Array.from({ length: ids }, (_, i) => (rnd() < 0.5 ? start + i : Math.floor(rnd() * 9)));
        if (k > 0 && shiftOf(map) !== undefined) shifts++;
        maps.push(map);
        for (let r = 0; r < count; r++) {
          const local = Math.floor(rnd() * ids);
          values.push(local);
          expected.push(k === 0 ? local : map[local]!);
        }
        // Room left unused after the range, as slices leave.
        for (let pad = Math.floor(rnd() * 3); pad > 0; pad--) values.push(99);
      }
      const buffer = new SharedArrayBuffer(4 * Math.max(1, values.length));
      new Uint32Array(buffer).set(values);
      compactColumns({ moves: [{ buffer, float: false, maps }], firstRows, counts });
      expect(Array.from(new Uint32Array(buffer).subarray(0, expected.length))).toEqual(expected);
    }
    expect(shifts).toBeGreaterThan(50);
  });

  it('shiftOf: consecutive ids from any start, nothing else', () => {
    expect(shiftOf(Uint32Array.from([4, 5, 6]))).toBe(4);
    expect(shiftOf(Uint32Array.from([0]))).toBe(0);
    expect(shiftOf(Uint32Array.from([4, 6]))).toBeUndefined();
    expect(shiftOf(Uint32Array.from([5, 4]))).toBeUndefined();
    expect(shiftOf(new Uint32Array(0))).toBeUndefined();
  });
});

describe('shrinking pieces of a parallel read or scoring', () => {
  it.each([1, 2, 3, 8, 16])('%i ranges: cover the file, each smaller than the one before, the last 1/n² of it', (parts) => {
    const ends = shrinkingEnds(parts);
    expect(ends).toHaveLength(parts);
    expect(ends.at(-1)).toBe(1);
    const sizes = ends.map((e, k) => e - (k === 0 ? 0 : ends[k - 1]!));
    for (let k = 1; k < parts; k++) expect(sizes[k]!).toBeLessThan(sizes[k - 1]!);
    expect(sizes.at(-1)!).toBeCloseTo(1 / (parts * parts), 12);
  });
});
