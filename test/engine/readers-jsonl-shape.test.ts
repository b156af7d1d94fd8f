/**
 * The shape of a JSON Lines file of rows is learnt from its first lines (readers/jsonLines.ts, SHAPE_LINES),
 * not from the first line alone: dumps write a grade only on judged rows, a segment only where it is known.
 * A key the first lines never write is not read, and the lines holding it are counted and named in the
 * notes. References: pandas.read_json(lines=True) (outside reference: the union of keys, NaN where a line
 * lacks one), the same rows written with the absent keys as null, and the reader with its byte loop
 * switched off (JSON.parse per line).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { configureEngine, engineSettings } from '../../extension/engine/config';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import { SHAPE_LINES } from '../../extension/engine/readers/jsonLines';
import { runPython } from '../reference/python.mjs';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { countingJsonParse, expectSameOutcome, expectSameReading, readOffThenOn } from './fixtures/sameReading';

const tmp = new TempDir();
const saved = engineSettings();
afterAll(() => {
  configureEngine(saved);
  tmp.remove();
});

/** Row r of a dump whose every third row is unjudged, written without a grade key (row 0 among them). */
function judgedOnly(r: number): Record<string, unknown> {
  const row: Record<string, unknown> = { query: `drill ${r >> 3}`, item: `sku-${r}` };
  if (r % 3 !== 0) row.grade = r % 4;
  row.score = (r % 17) / 4;
  row.locale = ['en-GB', 'de-DE'][r % 2];
  return row;
}

/** pandas' reading of a JSON Lines file: [query, item, grade or null, score or null, locale or null] per row. */
function pandasRows(path: string): [string, string, number | null, number | null, string | null][] {
  // pandas 1.5 (Debian python3-pandas); dtype=False keeps ids as written.
  const script = ['import json, math, sys', 'import pandas as pd',
    'df = pd.read_json(sys.argv[1], lines=True, dtype=False)',
    'nan = lambda v: None if v is None or (isinstance(v, float) and math.isnan(v)) else v',
    "print(json.dumps([[r['query'], r['item'], nan(r['grade']), nan(r['score']), nan(r.get('locale'))] for r in df.to_dict('records')]))"].join('\n');
  return JSON.parse(runPython(['-c', script, path], { what: 'the pandas reference' })) as never;
}

function ourRows(dump: RankedDump): [string, string, number | null, number | null, string | null][] {
  const locale = dump.segments.find((s) => s.name === 'locale');
  return Array.from({ length: dump.rowCount }, (_, r) => {
    const value = locale?.values.get(locale.ofRow[r]!);
    return [dump.queries.get(dump.query[r]!), dump.items.get(dump.item[r]!), Number.isNaN(dump.label[r]!) ? null : dump.label[r]!,
      Number.isNaN(dump.score[r]!) ? null : dump.score[r]!, value === '' || value === undefined ? null : value];
  });
}

describe('the shape of JSON Lines rows, from the first lines', () => {
  it('reads a grade written only on judged rows, first line unjudged, as pandas does: missing where absent, with no option', async () => {
    const lines = Array.from({ length: 3000 }, (_, r) => JSON.stringify(judgedOnly(r)));
    const path = tmp.file('judged-only.jsonl', lines.join('\n') + '\n');
    const { value: dump, parsed } = await countingJsonParse(() => readDump(path));
    // The byte loop takes the lines without the key as well as those with it.
    expect(parsed).toBe(SHAPE_LINES);
    expect(ourRows(dump)).toEqual(pandasRows(path));
    expect(dump.notes.unjudgedRows).toBe(1000);
    // The same rows with the absent grade written as null; the loop off; the key named with --columns.
    const asNull = tmp.file('judged-null.jsonl', lines.map((l, r) => (r % 3 === 0 ? l.replace('"score"', '"grade":null,"score"') : l)).join('\n') + '\n');
    expectSameReading(await readDump(asNull), dump, { offsets: false });
    const [slow, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(path));
    expectSameOutcome(slow, fast);
    expectSameReading(dump, await readDump(path, { columns: { label: 'grade' } }));
  });

  it('places a key new on a later line after the key written before it, so the byte loop takes lines with and without it', async () => {
    const lines = Array.from({ length: 1000 }, (_, r) => {
      const row: Record<string, unknown> = { query: `q${r >> 4}`, item: `i${r}` };
      if (r % 2 === 1) row.grade = r % 3;
      row.score = r / 1000;
      row.locale = 'en';
      if (r % 5 === 2) row.device = 'mobile';
      return JSON.stringify(row);
    });
    const path = tmp.file('key-order.jsonl', lines.join('\n') + '\n');
    const { value: dump, parsed } = await countingJsonParse(() => readDump(path));
    expect(parsed).toBe(SHAPE_LINES);
    expect(dump.segments.map((s) => s.name)).toEqual(['locale', 'device']);
    const device = dump.segments[1]!;
    expect(device.values.get(device.ofRow[2]!)).toBe('mobile');
    expect(device.values.get(device.ofRow[3]!)).toBe('');
    expect(Number.isNaN(dump.label[0]!)).toBe(true);
    expect(dump.label[1]).toBe(1);
  });

  it('counts and names the lines holding a key the first lines do not, and reads their other fields', async () => {
    const rows = Array.from({ length: 600 }, (_, r) => judgedOnly(r));
    rows[400]!.shelf = 'aisle 4';
    rows[451]!.shelf = 'aisle 5';
    rows[451]!.brand = 'Kettlewood';
    const text = rows.map((row) => JSON.stringify(row)).join('\n') + '\n';
    const [slow, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(tmp.file('late-key.jsonl', text)));
    const dump = expectSameOutcome(slow, fast)!;
    expect(dump.segments.map((s) => s.name)).toEqual(['locale']);
    expect(dump.rowCount).toBe(600);
    expect(dump.notes.messages).toContain(`2 lines hold fields the file's first lines do not ('shelf', 'brand'; the first on line 401): `
      + `those fields are not read (a file's fields are learnt from its first ${SHAPE_LINES} lines)`);
    // Without them, no note.
    const clean = await readDump(tmp.file('no-late-key.jsonl', rows.map(({ shelf: _s, brand: _b, ...row }) => JSON.stringify(row)).join('\n') + '\n'));
    expect(clean.notes.messages.filter((m) => m.includes('not read'))).toEqual([]);
  });

  it('learns from at least the first 16 lines when they are long: a grade first written past the first MB', async () => {
    const features = Array.from({ length: 60_000 }, (_, i) => (i % 89) / 4);
    const lines = Array.from({ length: 24 }, (_, r) => {
      const row = judgedOnly(r);
      if (r < 5) delete row.grade;
      return JSON.stringify({ ...row, features });
    });
    expect(lines.slice(0, 5).join('\n').length).toBeGreaterThan(1 << 20);
    const path = tmp.file('long-lines.jsonl', lines.join('\n') + '\n');
    const dump = await readDump(path);
    expect(ourRows(dump)).toEqual(pandasRows(path));
    expect(dump.notes.unjudgedRows).toBe(5 + 6);
  });

  it('still refuses a file whose first lines never name a grade, at its first line', async () => {
    const lines = Array.from({ length: 400 }, (_, r) => JSON.stringify({ query: 'q', item: `i${r}`, score: r, ...(r === 300 ? { grade: 1 } : {}) }));
    await expect(readDump(tmp.file('grade-too-late.jsonl', lines.join('\n') + '\n'))).rejects.toThrow(/late\.jsonl:1: expected a header naming the label column/);
  });

  // Seeded: every optional key dropped at random, now and then written in another order or with a key of
  // no role; the loop and JSON.parse must read the same.
  it.each([[71], [72], [73], [74]])('seed %i: keys dropped at random read as JSON.parse reads them', async (seed) => {
    const rnd = seededRandom(seed);
    const optional = ['grade', 'score', 'locale', 'device'];
    const lines = Array.from({ length: 2500 }, (_, r) => {
      const row: Record<string, unknown> = { query: `q${Math.floor(r / 9)}`, item: `i${r % 700}` };
      for (const key of optional) {
        if (rnd() < 0.3) continue;
        row[key] = key === 'grade' ? Math.floor(rnd() * 4) : key === 'score' ? Math.round(rnd() * 1e4) / 1e3 : `${key}-${Math.floor(rnd() * 3)}`;
      }
      if (rnd() < 0.05) row.extra = [rnd()];
      const entries = Object.entries(row);
      if (rnd() < 0.05) entries.reverse();
      return JSON.stringify(Object.fromEntries(entries));
    });
    const [slow, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(tmp.file(`dropped-${seed}.jsonl`, lines.join('\n') + '\n')));
    const dump = expectSameOutcome(slow, fast)!;
    expect(dump.rowCount).toBe(2500);
  });
});

// A key first written after the lines the shape is learnt from, then on most lines (a field a training job
// started writing mid-run): the byte loop reads past it rather than handing every such line to JSON.parse
// (2M rows: 2.76 s against 1.28 s for the file without the key, before it did).
describe('keys the shape lacks, read past by the byte loop', () => {
  const lateKeyRows = (count: number, extra: (r: number) => string) =>
    Array.from({ length: count }, (_, r) => {
      const line = JSON.stringify(judgedOnly(r));
      return r < 300 ? line : line.replace(/,"score"/, `,${extra(r)},"score"`);
    });

  it('reads the lines holding one as JSON.parse does, without JSON.parse, and counts them in the note', async () => {
    const lines = lateKeyRows(3000, (r) => `"shelf":"aisle ${r % 7}","stock":{"count":${r},"bins":[1,2,{"x":null}]}`);
    const path = tmp.file('late-key-most.jsonl', lines.join('\n') + '\n');
    const { value: dump, parsed } = await countingJsonParse(() => readDump(path));
    expect(parsed).toBe(SHAPE_LINES);
    const [slow, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(path));
    expectSameOutcome(slow, fast);
    expectSameReading(fast as RankedDump, dump);
    expect(dump.notes.messages).toContain(`2,700 lines hold fields the file's first lines do not ('shelf', 'stock'; the first on line 301): `
      + `those fields are not read (a file's fields are learnt from its first ${SHAPE_LINES} lines)`);
    expect(ourRows(dump)).toEqual(pandasRows(path));
  });

  // Each of these the loop hands to JSON.parse: its object decides (an escaped key may spell one of the
  // shape's; digit keys come first in its key order; a repeated key keeps its last value).
  it.each([
    ['an escaped key spelling the grade', '"gr\\u0061de":7'],
    ['an escaped key of its own', '"sh\\u0065lf":1'],
    ['a key that is a number', '"zeta":1,"10":2,"2":3'],
    ['a shape key written twice', '"grade":9'],
    ['a value that is not JSON', '"shelf":tru'],
    ['a string with a raw tab', '"shelf":"a\tb"'],
  ])('%s reads as JSON.parse reads it', async (_name, extra) => {
    const lines = lateKeyRows(700, () => extra);
    const [slow, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(tmp.file('late-key-handed.jsonl', lines.join('\n') + '\n')));
    expectSameOutcome(slow, fast);
  });

  it('names a key repeated on a line once, and keys in the order the lines write them', async () => {
    const lines = lateKeyRows(700, (r) => (r % 2 === 0 ? '"b":1,"a":2,"b":3' : '"c":[],"a":{}'));
    const [slow, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(tmp.file('late-key-repeat.jsonl', lines.join('\n') + '\n')));
    const dump = expectSameOutcome(slow, fast)!;
    expect(dump.notes.messages.find((m) => m.includes('not read'))).toMatch(/^400 lines hold fields .*\('b', 'a', 'c'; the first on line 301\)/);
  });

  // Seeded: keys the shape lacks, at random places on random later lines, with random JSON values.
  it.each([[81], [82], [83]])('seed %i: late keys anywhere on a line read as JSON.parse reads them', async (seed) => {
    const rnd = seededRandom(seed);
    const values = ['1', '-0.5e3', 'null', 'true', '"x y"', '"\\u00e9\\n"', '[]', '{"k":[1,{"j":"v"}]}', '"é€"'];
    const names = ['shelf', 'brand', 'colour', 'is_new', 'z'];
    const lines = Array.from({ length: 1500 }, (_, r) => {
      const entries = Object.entries(judgedOnly(r)).map(([k, v]) => `${JSON.stringify(k)}:${JSON.stringify(v)}`);
      if (r >= 300 && rnd() < 0.8) {
        for (let n = 1 + Math.floor(rnd() * 3); n > 0; n--) {
          const field = `"${names[Math.floor(rnd() * names.length)]}":${values[Math.floor(rnd() * values.length)]}`;
          entries.splice(Math.floor(rnd() * (entries.length + 1)), 0, field);
        }
      }
      return `{${entries.join(rnd() < 0.2 ? ' , ' : ',')}}`;
    });
    const [slow, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(tmp.file(`late-keys-${seed}.jsonl`, lines.join('\n') + '\n')));
    const dump = expectSameOutcome(slow, fast)!;
    expect(dump.rowCount).toBe(1500);
    expect(dump.notes.messages.some((m) => m.includes('not read'))).toBe(true);
  });
});
