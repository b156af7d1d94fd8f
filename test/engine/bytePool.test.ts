/**
 * BytePool.reserve (a merge's one-time growth) against a pool that grows as it goes: the same ids, texts
 * and look-ups for seeded strings with repeats, whether room is made before, between or after the adds,
 * and whether it is more or less than what comes.
 */
import { describe, expect, it } from 'vitest';
import { BytePool, hashBytes } from '../../extension/engine/model/bytePool';
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

describe('BytePool look-ups compare four bytes at a time', () => {
  // Same length and, when forced, the same hash as a stored value, differing in one byte at every position
  // (the four-byte steps and the byte tail both), at offsets of every alignment in the caller's array.
  it.each([[0], [1], [3], [7], [8], [9], [12], [31], [40]])('values of %i bytes differing in one byte are told apart', (length) => {
    const pool = new BytePool();
    const rand = seededRandom(length + 1);
    const value = Uint8Array.from({ length }, () => 97 + Math.floor(rand() * 26));
    const id = pool.intern(value, 0, length);
    for (let shift = 0; shift < 4; shift++) {
      // A view that starts inside its buffer, as a slice of a file buffer does.
      const room = new Uint8Array(length + shift + 8).subarray(5);
      room.set(value, shift);
      expect(pool.findBytes(room, shift, shift + length)).toBe(id);
      const hash = hashBytes(value, 0, length);
      for (let at = 0; at < length; at++) {
        room[shift + at] ^= 1;
        // The stored value's hash, so only the comparison can refuse it.
        expect(pool.findHashed(room, shift, shift + length, hash)).toBe(-1);
        room[shift + at] ^= 1;
      }
    }
  });
});

describe('BytePool.forgetCaller', () => {
  it('lets go of the last array compared with, and finds values as before after it', async () => {
    const pool = new BytePool();
    const chunk = new TextEncoder().encode('xx cordless drill 18v xx');
    const id = pool.intern(chunk, 3, 21);
    expect(pool.findBytes(chunk, 3, 21)).toBe(id);
    // The array is held for the next comparison (its view reused) until the reader lets go.
    expect((pool as unknown as { callerViewOf?: Uint8Array }).callerViewOf).toBe(chunk);
    pool.forgetCaller();
    expect((pool as unknown as { callerViewOf?: Uint8Array }).callerViewOf).toBeUndefined();
    expect(pool.findBytes(chunk, 3, 21)).toBe(id);
    expect(pool.findBytes(chunk, 3, 20)).toBe(-1);
    // A finished read's pools hold none of the read's chunks (the third row's query is looked up and compared).
    const { readDump } = await import('../../extension/engine/readers/index');
    const { TempDir } = await import('./fixtures/readers/tempFiles');
    const tmp = new TempDir();
    const dump = await readDump(tmp.file('forget.csv', 'query,item,label,score\nlong query text here,a,1,0.5\nother long query,c,1,0.1\nlong query text here,b,0,0.25\n'));
    expect((dump.queries as unknown as { callerViewOf?: Uint8Array }).callerViewOf).toBeUndefined();
  });
});
