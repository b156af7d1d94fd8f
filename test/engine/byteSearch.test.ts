/**
 * The bounded byte search the readers use instead of Buffer.indexOf (which scans to the buffer's end):
 * seeded random buffers against the obvious loop, and the text checks on buffers whose bytes past the
 * data's end (stale text of an earlier chunk) hold the very bytes searched for.
 */
import { describe, expect, it } from 'vitest';
import { indexOfByte } from '../../extension/engine/readers/byteSearch';
import { countNewlines, firstBadByte } from '../../extension/engine/readers/textCheck';
import { seededRandom } from '../reference/random';

/** The plain path: a loop over buf[start, end). */
function slowIndexOf(buf: Uint8Array, byte: number, start: number, end: number): number {
  for (let i = start; i < end; i++) if (buf[i] === byte) return i;
  return -1;
}

describe('indexOfByte', () => {
  it('equals the plain loop on seeded buffers, ranges short (loop) and long (native search)', () => {
    for (let seed = 1; seed <= 300; seed++) {
      const random = seededRandom(seed);
      const length = 1 + Math.floor(random() * 400);
      // A small alphabet makes hits, misses and hits just past `end` all common.
      const buf = Buffer.from(Array.from({ length }, () => Math.floor(random() * 6)));
      const start = Math.floor(random() * length);
      const end = start + Math.floor(random() * (length - start + 1));
      const byte = Math.floor(random() * 7);
      expect(indexOfByte(buf, byte, start, end), `seed ${seed}`).toBe(slowIndexOf(buf, byte, start, end));
    }
  });

  it('never reports a byte at or past end', () => {
    const buf = Buffer.from('a'.repeat(100) + '"');
    expect(indexOfByte(buf, 34, 0, 100)).toBe(-1);
    expect(indexOfByte(buf, 34, 0, 101)).toBe(100);
    expect(indexOfByte(buf, 34, 10, 20)).toBe(-1);
    expect(indexOfByte(buf, 34, 5, 5)).toBe(-1);
  });
});

describe('text checks stop at the data end', () => {
  // A buffer as a reader holds it: 200 bytes of data, then stale bytes of an earlier, longer chunk.
  const data = Buffer.from('q1,d1,1,0.5\n'.repeat(16) + 'q2,d2,0,0.25\n'.repeat(1)).subarray(0, 200);
  const buf = Buffer.concat([data, Buffer.from([0, 0xff, 10, 10, 10])]);

  it('firstBadByte ignores a NUL and a non-UTF-8 byte past end, and finds them before it', () => {
    expect(firstBadByte(buf, 0, 200, true)).toBe(-1);
    expect(firstBadByte(buf, 0, 201, true)).toBe(200);
    expect(firstBadByte(buf, 0, 202, true)).toBe(200);
    expect(firstBadByte(buf, 201, 202, true)).toBe(201);
  });

  it('countNewlines counts only before end', () => {
    expect(countNewlines(buf, 0, 200)).toBe(slowCount(buf, 0, 200));
    expect(countNewlines(buf, 0, buf.length)).toBe(slowCount(buf, 0, 200) + 3);
  });
});

function slowCount(buf: Uint8Array, start: number, end: number): number {
  let n = 0;
  for (let i = start; i < end; i++) if (buf[i] === 10) n++;
  return n;
}
