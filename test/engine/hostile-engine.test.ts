/**
 * The engine side of the hostile-input rules: the UTF-8 check against a validator written from the
 * Unicode Standard's table of well-formed byte sequences, ERR's overflow-free stop probability against
 * the published formula, and the sensitivity rows an overflowing gain cannot fill.
 */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { gainProblem, largestSafeGain } from '../../extension/engine/evaluate/gainLimits';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { errStopProbability } from '../../extension/engine/metrics/err';
import { gainFunction } from '../../extension/engine/metrics/gain';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { assertTextHead, firstBadByte } from '../../extension/engine/readers/textCheck';
import { seededRandom } from '../reference/random';
import { buildDump, queryRows } from './dumpBuilder';

/**
 * Index of the first NUL or ill-formed byte, from Table 3-7 "Well-Formed UTF-8 Byte Sequences" of the
 * Unicode Standard (chapter 3.9): each lead byte's allowed second-byte range, then 80..BF.
 */
function slowFirstBad(b: Uint8Array): number {
  const ranges: [number, number, [number, number], number][] = [
    [0xc2, 0xdf, [0x80, 0xbf], 2], [0xe0, 0xe0, [0xa0, 0xbf], 3], [0xe1, 0xec, [0x80, 0xbf], 3], [0xed, 0xed, [0x80, 0x9f], 3],
    [0xee, 0xef, [0x80, 0xbf], 3], [0xf0, 0xf0, [0x90, 0xbf], 4], [0xf1, 0xf3, [0x80, 0xbf], 4], [0xf4, 0xf4, [0x80, 0x8f], 4],
  ];
  let i = 0;
  while (i < b.length) {
    if (b[i] === 0) return i;
    if (b[i]! < 0x80) {
      i++;
      continue;
    }
    const r = ranges.find(([lo, hi]) => b[i]! >= lo && b[i]! <= hi);
    if (!r) return i;
    const [, , [lo2, hi2], length] = r;
    if (i + 1 >= b.length || b[i + 1]! < lo2 || b[i + 1]! > hi2) return i;
    for (let k = 2; k < length; k++) if (i + k >= b.length || b[i + k]! < 0x80 || b[i + k]! > 0xbf) return i;
    i += length;
  }
  return -1;
}

describe('firstBadByte against the Unicode table of well-formed sequences', () => {
  it('agrees on 3000 seeded byte strings mixing ASCII, valid text and stray bytes', () => {
    const rand = seededRandom(2024);
    const pieces = ['a', 'sku-1,', '\n', 'é', '€', '𝄞', '日本'].map((t) => Buffer.from(t, 'utf8'));
    for (let n = 0; n < 3000; n++) {
      const parts: Uint8Array[] = [];
      const count = 1 + Math.floor(rand() * 12);
      for (let p = 0; p < count; p++) {
        parts.push(rand() < 0.85 ? pieces[Math.floor(rand() * pieces.length)]! : Uint8Array.of(Math.floor(rand() * 256)));
      }
      const bytes = Buffer.concat(parts);
      expect(firstBadByte(bytes, 0, bytes.length, true), bytes.toString('hex')).toBe(slowFirstBad(bytes));
    }
  });

  it('waits for a sequence cut by the chunk end unless the input is complete', () => {
    const euro = Buffer.from('ab€', 'utf8');
    for (let cut = 3; cut < euro.length; cut++) {
      expect(firstBadByte(euro, 0, cut, false)).toBe(-1);
      expect(firstBadByte(euro, 0, cut, true)).toBe(2);
    }
  });

  it('names the line of a stray byte in the head, and UTF-16 as such', () => {
    expect(() => assertTextHead(Buffer.from('query,item\nq,a\nq\xe9,b\n', 'latin1'), 'f.csv')).toThrow(/^f\.csv:3: expected UTF-8 text .*0xE9 at byte 2/);
    expect(() => assertTextHead(Buffer.from('query,item\n', 'utf16le'), 'f.csv')).toThrow(/^f\.csv:1: .*UTF-16/);
  });
});

describe('ERR stop probability 2^(g−gmax) − 2^(−gmax)', () => {
  it('is the published (2^g − 1) / 2^gmax bit for bit on integer grades (Chapelle et al. 2009)', () => {
    for (let gmax = 0; gmax <= 60; gmax++) {
      const stop = errStopProbability(gmax);
      for (let g = 0; g <= Math.min(gmax, 52); g++) expect(Object.is(stop(g), (2 ** g - 1) / 2 ** gmax), `g ${g} gmax ${gmax}`).toBe(true);
    }
  });

  it('stays finite where 2^gmax is Infinity: R(gmax) = 1, R(0) = 0', () => {
    const stop = errStopProbability(2000);
    expect(stop(2000)).toBe(1);
    expect(stop(0)).toBe(0);
    expect(stop(1999)).toBe(0.5);
  });
});

describe('gains and stop probabilities looked up for small grades', () => {
  it('give the bits of the plain formula for every grade, small integers, fractions, negatives and huge ones alike', () => {
    const grades = [...Array.from({ length: 70 }, (_, g) => g), -1, -0, 0.5, 2.25, 63.5, 1e3, -1e3, 1e300, NaN, Infinity];
    const exponential = gainFunction({ kind: 'exponential' });
    for (const g of grades) expect(Object.is(exponential(g), Math.pow(2, g) - 1), `gain of ${g}`).toBe(true);
    for (const gmax of [0, 1, 4, 30, 63, 64, 2000]) {
      const stop = errStopProbability(gmax);
      for (const g of grades) expect(Object.is(stop(g), Math.pow(2, g - gmax) - Math.pow(2, -gmax)), `R(${g}) with gmax ${gmax}`).toBe(true);
    }
  });
});

describe('gains a double cannot hold', () => {
  it('bounds the gain by the largest query: 4·n²·|gain| must stay finite', () => {
    expect(largestSafeGain(1)).toBe(Number.MAX_VALUE / 4);
    expect(gainProblem({ kind: 'exponential' }, { lowest: 0, highest: 1021 }, 1)).toBeUndefined();
    expect(gainProblem({ kind: 'exponential' }, { lowest: 0, highest: 1024 }, 1)?.why).toMatch(/beyond the largest double/);
    expect(gainProblem({ kind: 'exponential' }, { lowest: 0, highest: 1000 }, 4000)?.why).toMatch(/too large to sum over a query of 4000 items/);
    expect(gainProblem({ kind: 'linear' }, { lowest: -1e308, highest: 3 }, 2)?.grade).toBe(-1e308);
  });

  it('marks the exponential sensitivity row unavailable, with the reason, when grades overflow or are negative', () => {
    const metrics = parseMetricList('ndcg@10');
    const linear = { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' as const } };
    for (const grades of [[2000, 0, 1], [-1, 0, 2]]) {
      const ev = evaluate(buildDump(queryRows('cordless drill 18v', grades, [3, 2, 1])), metrics, linear);
      const row = ev.sensitivity.find((r) => r.label === 'gain: exponential');
      expect(row, `grades ${grades}`).toBeDefined();
      expect(row!.counted).toBe(0);
      expect(row!.unavailable).toMatch(grades[0]! < 0 ? /negative/ : /beyond the largest double/);
      expect(ev.sensitivity.filter((r) => r.unavailable === undefined).every((r) => Number.isFinite(r.mean))).toBe(true);
    }
  });
});
