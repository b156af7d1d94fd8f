/**
 * Series-wide query ids (engine/trend/queryIds.ts) against the plain way: one Map from name to id,
 * filled in order of first appearance. Seeded series of invented hardware-store queries: checkpoints
 * with the first one's queries in its order (the fast path, which must really run), shuffled, with
 * queries missing and with new ones.
 */
import { describe, expect, it } from 'vitest';
import { SeriesQueryIds } from '../../extension/engine/trend/queryIds';
import { QUERY_NAMES, seededRandom } from '../reference/random';

/** The plain path. */
function plainIds(series: readonly (readonly string[])[]): { ids: number[][]; names: string[] } {
  const index = new Map<string, number>();
  const names: string[] = [];
  const ids = series.map((checkpoint) => checkpoint.map((name) => {
    if (!index.has(name)) {
      index.set(name, names.length);
      names.push(name);
    }
    return index.get(name)!;
  }));
  return { ids, names };
}

describe('series-wide query ids', () => {
  it('equal the plain interning on seeded series, and reuse the first checkpoint\'s ids when the names match it', () => {
    for (let seed = 1; seed <= 200; seed++) {
      const random = seededRandom(seed);
      const pool = Array.from({ length: 5 + Math.floor(random() * 40) }, (_, i) => `${QUERY_NAMES[i % QUERY_NAMES.length]} ${i}`);
      const first = pool.filter(() => random() < 0.8);
      const series: string[][] = [first];
      for (let k = 1; k < 6; k++) {
        const kind = random();
        if (kind < 0.5) series.push([...first]); // the usual case: same queries, same order
        else if (kind < 0.7) series.push([...first].sort(() => random() - 0.5));
        else series.push(pool.filter(() => random() < 0.7));
      }
      const ids = new SeriesQueryIds();
      const got = series.map((c) => ids.idsOf(c));
      const plain = plainIds(series);
      expect(got.map((a) => [...a]), `seed ${seed}`).toEqual(plain.ids);
      expect(ids.all, `seed ${seed}`).toEqual(plain.names);
      series.forEach((c, k) => {
        const same = c.length === first.length && c.every((n, i) => n === first[i]);
        if (k > 0 && same) expect(got[k], `seed ${seed} checkpoint ${k}`).toBe(got[0]);
      });
    }
  });

  it('a checkpoint in another order is not taken for the first one', () => {
    const ids = new SeriesQueryIds();
    expect([...ids.idsOf(['wood screws 4x40', 'paint roller'])]).toEqual([0, 1]);
    expect([...ids.idsOf(['paint roller', 'wood screws 4x40'])]).toEqual([1, 0]);
    expect([...ids.idsOf(['paint roller', 'led bulb e27'])]).toEqual([1, 2]);
    expect(ids.all).toEqual(['wood screws 4x40', 'paint roller', 'led bulb e27']);
  });
});
