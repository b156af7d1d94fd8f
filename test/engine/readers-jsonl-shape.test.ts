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
