/**
 * Seeded random comparisons: the byte-level number parser against Number(), the byte-keyed pool
 * against a Map, and whole CSV files against a slow character-by-character reference parser
 * written here (RFC 4180 quoting rules) and against pandas.read_csv (outside reference).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { BytePool } from '../../extension/engine/model/bytePool';
import { readDump } from '../../extension/engine/readers/index';
import { describeNonNumber, parseNumber } from '../../extension/engine/readers/numbers';
import { configureEngine } from '../../extension/engine/config';
import { plainRows, TempDir, type PlainRow } from './fixtures/readers/tempFiles';
import { runPython } from '../reference/python.mjs';
import { seededRandom } from '../reference/random';

const tmp = new TempDir();
afterAll(() => tmp.remove());
const bytesOf = (s: string) => Buffer.from(s, 'utf8');

function randomDecimal(rnd: () => number): string {
  const digits = (n: number) => Array.from({ length: n }, () => Math.floor(rnd() * 10)).join('');
  const sign = rnd() < 0.3 ? '-' : rnd() < 0.1 ? '+' : '';
  const intPart = digits(Math.floor(rnd() * 20));
  const frac = rnd() < 0.7 ? '.' + digits(Math.floor(rnd() * 26)) : '';
  const exp = rnd() < 0.15 ? `e${rnd() < 0.5 ? '-' : ''}${Math.floor(rnd() * 330)}` : '';
  const text = sign + intPart + frac + exp;
  return /\d/.test(intPart + frac) ? text : sign + '0' + exp;
}

describe('parseNumber equals Number(text) exactly', () => {
  it('on 200k seeded random decimals and on edge cases', () => {
    const rnd = seededRandom(20240611);
    const cases = ['0', '-0', '-0.0', '1.', '.5', '00012.50', '0.1', '0.3', '9007199254740992', '9007199254740993',
      '123456789012345678901234', '1e308', '1e309', '4.9e-324', '2.2250738585072014e-308', '0.000000000000000000001',
      '1.7976931348623157e308', '123.4567890123456789', '99999999999999999999.5'];
    for (let i = 0; i < 200_000; i++) cases.push(randomDecimal(rnd));
    let mismatches = 0;
    for (const text of cases) {
      const b = bytesOf(text);
      if (!Object.is(parseNumber(b, 0, b.length), Number(text))) mismatches++;
    }
    expect(mismatches).toBe(0);
  });

  // Long mantissas and exponents are decoded from the bytes' own range of a larger array (a view into a chunk), so
  // bytes just outside the field, and the view's offset, must not leak in.
  it('reads a field inside a larger array, between digits, from a view with an offset', () => {
    const rnd = seededRandom(77);
    const cases = ['0.12345678901234568', '1e5', '-4.35E-05', '+7.0e+2', '12345678901234567890', ' 2.5', '3.25 '];
    for (let i = 0; i < 20_000; i++) cases.push(randomDecimal(rnd));
    let mismatches = 0;
    for (const text of cases) {
      const whole = bytesOf(`98${text}76`);
      const view = whole.subarray(1);
      if (!Object.is(parseNumber(view, 1, 1 + text.length), Number(text.trim()))) mismatches++;
    }
    expect(mismatches).toBe(0);
  });

  it('refuses what JavaScript accepts but a dump should not hold', () => {
    for (const text of ['0x1F', '0b11', '1_000', '', ' ', '1e', '--1', '1.2.3', 'Infinity', 'NaN', '12abc']) {
      const b = bytesOf(text);
      expect(Number.isNaN(parseNumber(b, 0, b.length)), text).toBe(true);
    }
    const kind = (t: string) => describeNonNumber(bytesOf(t), 0, bytesOf(t).length);
    expect(['', 'NaN', 'na', 'NULL', 'None'].map(kind)).toEqual(['missing', 'missing', 'missing', 'missing', 'missing']);
    expect(['inf', '-Infinity', '+inf'].map(kind)).toEqual(['infinite', 'infinite', 'infinite']);
    expect(['0x1F', 'high', '1,5'].map(kind)).toEqual(['invalid', 'invalid', 'invalid']);
  });
});

describe('BytePool matches a Map-based pool', () => {
  it('internString gives the ids of the UTF-8 bytes, with runs, non-ASCII text and lone surrogates', () => {
    const rnd = seededRandom(8);
    const alphabet = ['a', 'Z', '7', ' ', 'é', 'ß', '螺', '🔩', '\ud800', '\udfff'];
    const byString = new BytePool();
    const byBytes = new BytePool();
    let wrong = 0;
    let previous = '';
    for (let i = 0; i < 50_000; i++) {
      let s = previous;
      // Half the values repeat the one before (runs, as one query's rows), some are equal but a new string object.
      if (rnd() < 0.5) {
        s = '';
        const length = Math.floor(rnd() * 8);
        for (let k = 0; k < length; k++) s += alphabet[Math.floor(rnd() * alphabet.length)];
      } else if (rnd() < 0.3) s = [...previous].join('');
      // TextEncoder is the outside reference for the bytes (lone surrogates become U+FFFD).
      const bytes = new TextEncoder().encode(s);
      const id = byString.internString(s);
      // Same ids and the same stored bytes (ids alone would match for any one-to-one encoding).
      if (id !== byBytes.intern(bytes, 0, bytes.length) || byString.get(id) !== new TextDecoder().decode(bytes)) wrong++;
      previous = s;
    }
    expect(wrong).toBe(0);
    expect(byString.size).toBe(byBytes.size);
    expect(byString.size).toBeGreaterThan(1000);
  });

  it('gives first-seen dense ids over 300k seeded interns, with UTF-8 and empty strings', () => {
    const rnd = seededRandom(7);
    const alphabet = ['a', 'b', '7', '-', 'é', 'ß', '螺', '丝', '🔩', ' '];
    const pool = new BytePool();
    const reference = new Map<string, number>();
    let wrong = 0;
    for (let i = 0; i < 300_000; i++) {
      const length = Math.floor(rnd() * 6);
      let s = '';
      for (let k = 0; k < length; k++) s += alphabet[Math.floor(rnd() * alphabet.length)];
      if (rnd() < 0.5) s = `sku-${Math.floor(rnd() * 150_000)}`;
      const b = bytesOf(`<<${s}>>`);
      const id = pool.intern(b, 2, b.length - 2);
      if (!reference.has(s)) reference.set(s, reference.size);
      if (reference.get(s) !== id) wrong++;
    }
    expect(wrong).toBe(0);
    expect(pool.size).toBe(reference.size);
    for (const [s, id] of reference) {
      if (pool.get(id) !== s || pool.find(s) !== id) wrong++;
    }
    expect(wrong).toBe(0);
    expect(pool.find('never interned')).toBe(-1);
    expect(() => pool.get(pool.size)).toThrow(RangeError);
  });
});

/** A slow, obviously-correct CSV reader over a JS string: one state machine, one character at a time. */
function referenceCsv(text: string): { fields: string[]; line: number; offset: number }[] {
  const records: { fields: string[]; line: number; offset: number }[] = [];
  let i = text.startsWith('\uFEFF') ? 1 : 0;
  let line = 1;
  while (i < text.length) {
    if (text[i] === '\n') { line++; i++; continue; }
    if (text[i] === '\r' && text[i + 1] === '\n') { line++; i += 2; continue; }
    const start = i;
    const startLine = line;
    const fields: string[] = [];
    let field = '';
    for (;;) {
      if (text[i] === '"') {
        i++;
        for (;;) {
          if (text[i] === '"' && text[i + 1] === '"') { field += '"'; i += 2; }
          else if (text[i] === '"') { i++; break; }
          else { if (text[i] === '\n') line++; field += text[i]; i++; }
        }
        if (text[i] === '\r') i++;
      } else {
        while (i < text.length && text[i] !== ',' && text[i] !== '\n') field += text[i++];
        if (field.endsWith('\r')) field = field.slice(0, -1);
      }
      fields.push(field);
      field = '';
      if (i >= text.length) break;
      if (text[i] === '\n') { i++; line++; break; }
      i++;
    }
    records.push({ fields, line: startLine, offset: Buffer.byteLength(text.slice(0, start)) });
  }
  return records;
}

function referenceNumber(text: string, isScore: boolean): number {
  if (/^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/.test(text.trim())) {
    const v = Number(text);
    return Number.isFinite(v) || !isScore ? v : NaN;
  }
  return NaN; // the generator only writes '', 'NaN' or 'inf' otherwise
}

function randomCsv(seed: number, rows: number, quoting: boolean): string {
  const rnd = seededRandom(seed);
  const pick = <T>(xs: T[]) => xs[Math.floor(rnd() * xs.length)]!;
  const words = ['drill', 'screws 4x40', 'sander', 'hinge, brass', 'say "hi"', 'multi\nline', 'tape', 'jigsaw blade', 'ü-bolt'];
  const quote = (s: string) => (quoting && (rnd() < 0.3 || /[",\n]/.test(s)) ? `"${s.replace(/"/g, '""')}"` : s.replace(/[",\n]/g, '_'));
  const eol = () => (rnd() < 0.2 ? '\r\n' : '\n');
  let out = (rnd() < 0.5 ? '\uFEFF' : '') + 'query_id,item_id,label,score,locale' + eol();
  for (let r = 0; r < rows; r++) {
    if (rnd() < 0.03) out += eol();
    const label = rnd() < 0.05 ? '' : String(Math.floor(rnd() * 5));
    const score = rnd() < 0.05 ? pick(['', 'NaN', 'inf']) : randomDecimal(rnd);
    out += [quote(`q ${Math.floor(r / 20)} ${pick(words)}`), quote(`${pick(words)} ${Math.floor(rnd() * 500)}`), label, score,
      quote(pick(['en', 'de', 'fr, BE']))].join(',') + eol();
  }
  return out;
}

function expectedRows(text: string): PlainRow[] {
  const [, ...records] = referenceCsv(text);
  return records.map(({ fields, line, offset }) => ({
    query: fields[0]!, item: fields[1]!, label: referenceNumber(fields[2]!, false), score: referenceNumber(fields[3]!, true),
    line, offset, segments: { locale: fields[4]! },
  }));
}

describe('random CSV files against the reference parser', () => {
  it.each([
    [1, 7], [2, 64], [3, 1000], [4, 8 << 20],
  ])('seed %i with %i-byte chunks gives identical rows, lines and offsets', async (seed, chunk) => {
    const text = randomCsv(seed, 3000, seed !== 4);
    const path = tmp.file(`random-${seed}.csv`, text);
    const saved = configureEngine({ tuning: { plainChunkBytes: chunk } });
    try {
      const dump = await readDump(path, { threads: 1 });
      expect(plainRows(dump)).toEqual(expectedRows(text));
      expect(dump.items.size).toBe(new Set(expectedRows(text).map((r) => r.item)).size);
    } finally {
      configureEngine(saved);
    }
  });
});

describe('pandas.read_csv as an outside reference', () => {
  it('reads the same values from a quoted random file', async () => {
    const text = randomCsv(99, 2000, true).replace(/^\uFEFF/, '').replace(/,inf,/g, ',,');
    const path = tmp.file('pandas.csv', text);
    // pandas 1.5 (Debian python3-pandas); round_trip float parsing gives correctly rounded doubles.
    // Scores that overflow to infinity are missing in a dump (null here), as are empty and NaN ones.
    // Forms such as '1.' make pandas keep the column as text; Python's float() (correctly rounded) converts those.
    const script = [
      'import json, math, sys', 'import pandas as pd',
      "df = pd.read_csv(sys.argv[1], dtype={'query_id': str, 'item_id': str, 'locale': str}, keep_default_na=False,",
      "  na_values={'label': ['', 'NaN'], 'score': ['', 'NaN']}, float_precision='round_trip', skip_blank_lines=True)",
      "rows = [[q, i, None if l != l else float(l), float(s) if math.isfinite(float(s)) else None, c] for q, i, l, s, c in df.itertuples(index=False)]",
      'print(json.dumps(rows))',
    ].join('\n');
    const out = runPython(['-c', script, path], { what: 'the pandas reference' });
    const pandasRows = (JSON.parse(out) as [string, string, number | null, number | null, string][])
      .map(([q, i, l, s, c]) => [q, i, l ?? NaN, s ?? NaN, c]);
    const dump = await readDump(path);
    expect(plainRows(dump).map((r) => [r.query, r.item, r.label, r.score, r.segments['locale']])).toEqual(pandasRows);
  });
});
