/**
 * BytePool.reserve (a merge's one-time growth) against a pool that grows as it goes: the same ids, texts
 * and look-ups for seeded strings with repeats, whether room is made before, between or after the adds,
 * and whether it is more or less than what comes.
 */
import { describe, expect, it } from 'vitest';
import { BytePool } from '../../extension/engine/model/bytePool';
import { seededRandom } from '../reference/random';

function strings(seed: number, count: number): string[] {
  const rand = seededRandom(seed);
  return Array.from({ length: count }, () => `garden hose ${Math.floor(rand() * count * 0.7)}${rand() < 0.05 ? ' ünï' : ''}`);
}

describe('BytePool.reserve', () => {
  it.each([[1, 0.0, 3], [2, 0.5, 1], [3, 1.0, 0.2], [4, 0.3, 10]])('seed %i: reserving at %f of the adds, room for %f× what comes, changes nothing but growth',
    (seed, at, factor) => {
      const all = strings(seed, 20_000);
      const grown = new BytePool();
      const reserved = new BytePool();
      const cut = Math.floor(all.length * at);
      const ids = all.map((text, i) => {
        if (i === cut) reserved.reserve(Math.ceil(all.length * factor), Math.ceil(all.length * 24 * factor));
        const id = reserved.internString(text);
        expect(id).toBe(grown.internString(text));
        return id;
      });
      if (cut === all.length) reserved.reserve(all.length * 2, 1 << 20);
      expect(reserved.size).toBe(grown.size);
      for (let id = 0; id < grown.size; id++) expect(reserved.get(id)).toBe(grown.get(id));
      all.forEach((text, i) => expect(reserved.find(text)).toBe(ids[i]));
      expect(reserved.find('not a hose')).toBe(-1);
    });
});
