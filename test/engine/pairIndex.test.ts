/** The judgments join's pair table against a plain Map on seeded pairs, repeats included. */
import { describe, expect, it } from 'vitest';
import { PairIndex } from '../../extension/engine/readers/pairIndex';
import { seededRandom } from '../reference/random';

describe('PairIndex', () => {
  it('finds what a Map finds, and reports the first entry of a repeated pair', () => {
    const rand = seededRandom(5);
    const n = 20_000;
    const index = new PairIndex(n);
    const map = new Map<string, number>();
    let repeats = 0;
    for (let e = 0; e < n; e++) {
      // Few queries and items, so pairs repeat and probes collide.
      const q = Math.floor(rand() * 150);
      const i = Math.floor(rand() * 300);
      const key = `${q}/${i}`;
      const earlier = map.get(key);
      expect(index.add(q, i, e)).toBe(earlier ?? -1);
      if (earlier === undefined) map.set(key, e);
      else repeats++;
    }
    expect(repeats).toBeGreaterThan(1000);
    for (let q = 0; q < 160; q++) {
      for (let i = 0; i < 310; i++) expect(index.find(q, i)).toBe(map.get(`${q}/${i}`) ?? -1);
    }
  });
});
