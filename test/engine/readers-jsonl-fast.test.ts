/**
 * The JSON Lines byte loop (readers/jsonLinesFast.ts) must read exactly what JSON.parse reads: the same
 * rows, ids, grades and scores to the bit, lines, offsets, segments and notes, and the same error for
 * bad input. Seeded random files mix lines it takes (plain strings and decimals, spaces, null grades)
 * with lines it must hand over (escapes, exponents, keys in another order or missing or extra, numbers
 * as ids, nested values, raw tabs in a string, leading zeros). The reference is the same reader with
 * the loop switched off, itself checked against pandas in readers.test.ts.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { configureEngine, engineSettings } from '../../extension/engine/config';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import { SHAPE_LINES } from '../../extension/engine/readers/jsonLines';
import { TempDir } from './fixtures/readers/tempFiles';
import { randomJsonLines } from './fixtures/randomJsonLines';
import { countingJsonParse, expectSameOutcome, expectSameReading, readOffThenOn } from './fixtures/sameReading';

const tmp = new TempDir();
const saved = engineSettings();
afterAll(() => {
  configureEngine(saved);
});

async function readBoth(path: string): Promise<[RankedDump | Error, RankedDump | Error]> {
  return readOffThenOn('jsonLinesFastRows', () => readDump(path));
}

const expectSameDump = expectSameReading;

/** Plain lines of a query of their own, first: the shape is learnt from the first SHAPE_LINES lines through JSON.parse, so the lines after are the loop's. */
const SHAPE_PAD = Array.from({ length: SHAPE_LINES }, (_, r) => `{"query":"pad","item":"pad-${r}","label":0,"score":0}`);

describe('the JSON Lines byte loop', () => {
  it.each(Array.from({ length: 10 }, (_, i) => [300 + i]))('seed %i reads as JSON.parse does (or fails the same way)', async (seed) => {
    // Every other seed without the lines JSON refuses, so most comparisons are of whole dumps.
    const text = randomJsonLines(seed, 5_000);
    const clean = seed % 2 === 0 ? text.split(/\r?\n/).filter((l) => !/"01"|:\s*01|0\.5\.5|sku\\t|\t/.test(l)).join('\n') : text;
    const path = tmp.file(`fast-${seed}.jsonl`, clean);
    const dump = expectSameOutcome(...(await readBoth(path)));
    // Only the seeds with lines JSON refuses fail (both the same way).
    if (dump === undefined) expect(seed % 2).toBe(1);
    else expect(dump.rowCount).toBeGreaterThan(4_000);
  });

  // Numbers JSON does not allow must fail as JSON.parse fails them, not be read as the digits suggest.
  it.each([['01'], ['-01'], ['1.'], ['.5'], ['-'], ['+1'], ['1e'], ['0x10'], ['1..2'], ['NaN']])('a grade written %s is refused with the same message', async (bad) => {
    const lines = ['{"query":"q","item":"a","label":1,"score":0.5}', '{"query":"q","item":"b","label":2,"score":0.25}', `{"query":"q","item":"c","label":${bad},"score":0.1}`];
    const [reference, fast] = await readBoth(tmp.file(`fast-bad-${bad}.jsonl`, lines.join('\n') + '\n'));
    expect(reference).toBeInstanceOf(Error);
    expect((fast as Error).message).toBe((reference as Error).message);
    expect((fast as Error).message).toMatch(/:3\b/);
  });

  it('takes plain lines itself: a line it hands over costs a JSON.parse, and the plain file reads the same', async () => {
    const lines = Array.from({ length: 3000 }, (_, r) => `{"query": "drill, cordless ${Math.floor(r / 7)}", "item": "sku-${r}", "label": ${r % 5}, "score": ${(r % 97) / 8}}`);
    const path = tmp.file('fast-plain.jsonl', lines.join('\n') + '\n');
    const { value: fast, parsed } = await countingJsonParse(() => readDump(path));
    // The first lines set the keys through JSON.parse; the loop takes every other one.
    expect(parsed).toBe(SHAPE_LINES);
    const [reference] = await readBoth(path);
    expectSameDump(reference as RankedDump, fast);
    expect(fast.queries.get(1)).toBe('drill, cordless 1');
  });

  // Scores as printers write doubles (17 digits, exponents): taken by the loop through Number() of their text, which
  // is JSON.parse's value for them; one past the double range goes to JSON.parse's line.
  it('reads 17-digit and exponent numbers itself, to the bit JSON.parse gives, and hands over 1e400', async () => {
    const scores = ['0.12345678901234568', '-2.2250738585072014e-308', '1E+2', '5e-324', '1e-400', '-0.0e5', '9007199254740993',
      '123456789012345678901234', '0.1000000000000000055511151231257827', '4.35e-05', '1.7976931348623157e308'];
    const lines = [...SHAPE_PAD, ...scores.map((score, r) => `{"query":"q","item":"i${r}","label":${r % 3},"score":${score}}`)];
    const path = tmp.file('fast-long-numbers.jsonl', lines.join('\n') + '\n');
    const { value: fast, parsed } = await countingJsonParse(() => readDump(path));
    expect(parsed).toBe(SHAPE_LINES);
    const [reference] = await readBoth(path);
    expectSameDump(reference as RankedDump, fast);
    scores.forEach((score, r) => expect(Object.is(fast.score[SHAPE_LINES + r], Number(score)), score).toBe(true));
    const beyond = tmp.file('fast-beyond.jsonl', [...lines, '{"query":"q","item":"big","label":1,"score":1e400}'].join('\n') + '\n');
    expectSameOutcome(...(await readBoth(beyond)));
  });

  // Item and query ids are often numbers: integers of up to 15 digits are the loop's (their digits are the id
  // String() gives); anything else (16 digits, -0, a fraction, an exponent, a leading zero) goes to JSON.parse.
  it('reads integer ids itself, as JSON.parse and String() give them, and hands over other numbers', async () => {
    const ids = ['0', '7', '-12', '123456789012345', '-999999999999999'];
    const lines = [...SHAPE_PAD, ...ids.flatMap((id, k) => [id, String(100 + 10 * k), String(101 + 10 * k)].map((item, r) => `{"query":${k},"item":${item},"label":${r},"score":0.5}`))];
    const path = tmp.file('fast-integer-ids.jsonl', lines.join('\n') + '\n');
    const { value: fast, parsed } = await countingJsonParse(() => readDump(path));
    expect(parsed).toBe(SHAPE_LINES);
    const [reference] = await readBoth(path);
    expectSameDump(reference as RankedDump, fast);
    expect(fast.queries.get(fast.query[SHAPE_LINES + 12]!)).toBe('4');
    expect(fast.items.get(fast.item[SHAPE_LINES + 12]!)).toBe('-999999999999999');
    for (const other of ['1234567890123456', '-0', '1.0', '1e3', '2.5', '-5']) {
      const text = ['{"query":"q","item":"a","label":1,"score":0.5}', `{"query":"q","item":${other},"label":2,"score":0.25}`].join('\n') + '\n';
      const [ref, read] = await readBoth(tmp.file(`fast-id-${other}.jsonl`, text));
      expectSameOutcome(ref, read);
    }
  });

  // Each segment field has its own kind; the second once shared the number of a field of no role, and its
  // values were never stored (every row read as the first value).
  it('stores every segment field, not only the first', async () => {
    const lines = Array.from({ length: 300 }, (_, r) => JSON.stringify({ query: `q${r >> 3}`, item: `i${r}`, label: r % 3, score: (r % 17) / 4,
      locale: ['en', 'de', 'fr'][r % 3], device: ['mobile', 'desktop'][(r >> 2) % 2], shelf: `aisle ${r % 5}`, note: [r] }));
    const path = tmp.file('fast-segments.jsonl', lines.join('\n') + '\n');
    const [reference, fast] = await readBoth(path);
    expectSameDump(reference as RankedDump, fast as RankedDump);
    const dump = fast as RankedDump;
    expect(dump.segments.map((s) => s.name)).toEqual(['locale', 'device', 'shelf']);
    const valueAt = (k: number, row: number) => dump.segments[k]!.values.get(dump.segments[k]!.ofRow[row]!);
    expect([valueAt(0, 5), valueAt(1, 5), valueAt(2, 5)]).toEqual(['fr', 'desktop', 'aisle 0']);
    expect(new Set(Array.from({ length: 300 }, (_, r) => valueAt(2, r))).size).toBe(5);
  });

  // The loop reads keys and strings four bytes at a time: a byte it must stop at (a quote, a backslash, a
  // control byte) or a key's differing byte, at every place in a word, and bytes past 0x7f around them.
  const SPECIALS = ['\\"', '\\\\', '\\u0041', '\t', '\u0001', '\u007f', 'ü', '€', '😀', '"'];
  it.each(SPECIALS.map((s) => [JSON.stringify(s)]))('a string holding %s at every place in a word reads as JSON.parse reads it', async (special) => {
    const raw = JSON.parse(special) as string;
    const lines = ['{"query":"q","item":"first","label":1,"score":0.5}'];
    for (let before = 0; before < 9; before++) {
      for (let after = 0; after < 5; after++) lines.push(`{"query":"q${'w'.repeat(before)}","item":"${'a'.repeat(before)}${raw}${'b'.repeat(after)}","label":2,"score":0.25}`);
    }
    const [reference, fast] = await readBoth(tmp.file(`fast-word-${SPECIALS.indexOf(raw)}.jsonl`, lines.join('\n') + '\n'));
    expectSameOutcome(reference, fast);
  });

  it('a key differing in any one byte hands its line over, read as JSON.parse reads it', async () => {
    const keys = ['query_id', 'item', 'label', 'score'];
    const first = JSON.stringify({ query_id: 'q', item: 'i0', label: 1, score: 0.5 });
    for (const [k, key] of keys.entries()) {
      for (let at = 0; at < key.length; at++) {
        // One file each: a line lacking a role's key reads it as missing, or is refused; either way the reading
        // is JSON.parse's (the loop taking the changed key for the right one would store line 3's value).
        const changed = key.slice(0, at) + (key[at] === 'x' ? 'y' : 'x') + key.slice(at + 1);
        const row = (item: string) => Object.fromEntries(Object.entries({ query_id: 'q', item, label: 2, score: 0.25 }).map(([n, v]) => [n === key ? changed : n, v]));
        const text = [first, first.replace('i0', 'i1'), JSON.stringify(row(`i-${k}-${at}`))].join('\n') + '\n';
        const [reference, fast] = await readBoth(tmp.file(`fast-key-${k}-${at}.jsonl`, text));
        if (reference instanceof Error) expect(reference.message).toMatch(/:3\b/);
        expectSameOutcome(reference, fast);
      }
    }
  });
});
