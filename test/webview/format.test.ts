import { describe, expect, it } from 'vitest';
import { formatCount, formatDelta, formatFixed, formatP, formatShare, MISSING } from '../../webview/src/model/format';
import { formatCountInText } from '../../extension/presentation/numbers';
import { pythonJson } from '../reference/python.mjs';
import { seededRandom } from '../reference/random';

describe('formatFixed', () => {
  it('gives exactly the requested decimals', () => {
    expect(formatFixed(0.6123, 4)).toBe('0.6123');
    expect(formatFixed(1, 4)).toBe('1.0000');
    expect(formatFixed(0, 4)).toBe('0.0000');
    expect(formatFixed(12.5, 0)).toBe('12');
    expect(formatFixed(0.99996, 4)).toBe('1.0000');
    expect(formatFixed(999.99999, 2)).toBe('1000.00');
  });

  it('breaks exact ties to even, unlike toFixed', () => {
    // 0.125 and 0.375 are exact in binary, so these are true ties; round-half-even as in Python's
    // format() and IEEE 754's default rounding (common practice for decimal display).
    expect(formatFixed(0.125, 2)).toBe('0.12');
    expect((0.125).toFixed(2)).toBe('0.13'); // the behaviour we deliberately avoid
    expect(formatFixed(0.375, 2)).toBe('0.38');
    expect(formatFixed(2.5, 0)).toBe('2');
    // 0.615 is stored as 0.61499999999999999112, so it is not a tie and rounds down.
    expect(formatFixed(0.615, 2)).toBe('0.61');
  });

  it('marks missing and infinite values', () => {
    expect(formatFixed(NaN)).toBe(MISSING);
    expect(formatFixed(Infinity)).toBe('∞');
    expect(formatFixed(-Infinity)).toBe('-∞');
  });

  it('agrees with Python format(x, ".Nf") on seeded random values, ties and negatives', () => {
    const rand = seededRandom(20261202);
    const cases: [number, number][] = [];
    for (let i = 0; i < 3000; i++) {
      const d = Math.floor(rand() * 6);
      const kind = i % 4;
      let x: number;
      if (kind === 0) x = rand();
      else if (kind === 1) x = (rand() - 0.5) * 2e-4; // tiny values around zero, including "-0.0000"
      else if (kind === 2) x = Math.round(rand() * 4096) / 4096 - 0.5; // exact binary fractions: many ties
      else x = (rand() - 0.3) * 10 ** Math.floor(rand() * 8);
      cases.push([x, d]);
    }
    cases.push([0.5, 0], [1.5, 0], [-2.5, 0], [1e20, 2]);
    const python = pythonJson<string[]>(
      'import json,sys\nprint(json.dumps([format(x, ".%df" % d) for x, d in json.load(sys.stdin)]))',
      cases,
    );
    const mismatches = cases
      .map(([x, d], i) => ({ x, d, ours: formatFixed(x, d), theirs: python[i] }))
      .filter((c) => c.ours !== c.theirs);
    expect(mismatches).toEqual([]);
  });
});

describe('other formats', () => {
  it('signs deltas', () => {
    expect(formatDelta(0.01234)).toBe('+0.0123');
    expect(formatDelta(-0.004)).toBe('-0.0040');
    expect(formatDelta(0)).toBe('0.0000');
  });
  it('groups counts and shows small p-values as a bound', () => {
    expect(formatCount(100000)).toBe('100\u202f000');
    expect(formatCount(999)).toBe('999');
    expect(formatP(0.00001)).toBe('<0.0001');
    expect(formatP(0.0312)).toBe('0.0312');
    expect(formatShare(0.1234)).toBe('12.3%');
    expect(formatShare(NaN)).toBe(MISSING);
    expect(formatShare(0.0001)).toBe('<0.1%');
    expect(formatShare(0)).toBe('0.0%');
    expect(formatFixed(-0, 4)).toBe('0.0000');
  });
});

describe('formatCountInText', () => {
  it("groups whole counts with commas exactly as toLocaleString('en-US') does (ICU, the outside reference; seeded random)", () => {
    const rnd = seededRandom(12);
    const cases = [0, 1, 999, 1000, 1001, 999_999, 1_000_000, -1, -1000, -123_456_789, Number.MAX_SAFE_INTEGER, -Number.MAX_SAFE_INTEGER];
    for (let i = 0; i < 2000; i++) cases.push(Math.floor(rnd() * 10 ** Math.floor(rnd() * 16)) * (rnd() < 0.2 ? -1 : 1));
    for (const n of cases) expect(formatCountInText(n), String(n)).toBe(n.toLocaleString('en-US'));
    // Values that are not safe integers are left to the locale call itself.
    for (const x of [1.5, 1e20, NaN, Infinity]) expect(formatCountInText(x)).toBe(x.toLocaleString('en-US'));
  });
});
