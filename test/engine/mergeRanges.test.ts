/**
 * The merge of a parallel read decides from the ranges' query id maps alone whether the merged query
 * column is grouped (mergeRanges.ts); the slow obvious answer builds the merged column and scans it
 * (isGrouped). Ranges are made as a parallel read makes them: each grouped on its own, its queries
 * interned in local first-seen order into one pool in file order.
 */
import { describe, expect, it } from 'vitest';
import { isGrouped } from '../../extension/engine/model/rowTexts';
import { mergedStaysGrouped } from '../../extension/engine/threads/mergeRanges';
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
