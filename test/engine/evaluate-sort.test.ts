/** The per-query index sort against Array.prototype.sort (stable since ES2019) on seeded random keys. */
import { describe, expect, it } from 'vitest';
import { IndexSorter } from '../../extension/engine/evaluate/sortIndex';
import { seededRandom } from '../reference/random';

const shapes: Record<string, (r: () => number, i: number) => number> = {
  'uniform with few levels (many ties)': (r) => Math.floor(r() * 5),
  'uniform continuous': (r) => r() * 10 - 5,
  'one far outlier (one crowded bucket)': (r, i) => (i === 0 ? 1e9 : r()),
  'missing scores as -Infinity': (r) => (r() < 0.3 ? -Infinity : Math.floor(r() * 20) / 7),
  'range too wide to bucket': (r) => (r() < 0.5 ? -1.5e308 : 1.5e308 * r()),
  'heavy tail': (r) => Math.exp(r() * 40),
};

describe('IndexSorter.sortDescending', () => {
  for (const [name, draw] of Object.entries(shapes)) {
    it(name, () => {
      const rand = seededRandom(name.length * 31);
      const sorter = new IndexSorter();
      for (let trial = 0; trial < 300; trial++) {
        const n = 1 + Math.floor(rand() * (trial % 3 === 0 ? 400 : 60));
        const key = Float64Array.from({ length: n }, (_, i) => draw(rand, i));
        const idx = Uint32Array.from({ length: n }, (_, i) => i);
        // Start from a shuffled index order too: stability is relative to the input order.
        if (trial % 2 === 1) for (let i = n - 1; i > 0; i--) { const j = Math.floor(rand() * (i + 1)); [idx[i], idx[j]] = [idx[j]!, idx[i]!]; }
        const expected = Array.from(idx).sort((a, b) => (key[b]! > key[a]! ? 1 : key[b]! < key[a]! ? -1 : 0));
        sorter.sortDescending(idx, key, n);
        expect(Array.from(idx)).toEqual(expected);
      }
    });
  }
});
