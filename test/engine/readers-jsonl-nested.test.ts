/**
 * JSON Lines of one row per line whose other fields hold arrays or objects (a feature vector, an embedding,
 * request details), as machine-learning dumps often carry them. The line is still a row: the nested fields
 * are not segments, and the byte loop reads past them (readers/jsonLinesFast.ts, skipJsonValue) when they are
 * JSON that JSON.parse accepts. References: JSON.parse itself (ECMA-262, which follows RFC 8259's grammar),
 * and the same rows written without the nested fields.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { configureEngine, engineSettings } from '../../extension/engine/config';
import { readDump } from '../../extension/engine/readers/index';
import { SHAPE_LINES } from '../../extension/engine/readers/jsonLines';
import { skipJsonValue } from '../../extension/engine/readers/jsonGrammar';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { countingJsonParse, expectSameOutcome, readOffThenOn } from './fixtures/sameReading';

const tmp = new TempDir();
const saved = engineSettings();
afterAll(() => {
  configureEngine(saved);
  tmp.remove();
});

/** A random JSON value as text: numbers of every form, strings with escapes, literals, nested arrays and objects. */
function randomJson(rnd: () => number, depth: number): string {
  const x = rnd();
  if (depth < 4 && x < 0.25) return `[${Array.from({ length: Math.floor(rnd() * 4) }, () => randomJson(rnd, depth + 1)).join(rnd() < 0.5 ? ',' : ', ')}]`;
  if (depth < 4 && x < 0.4) {
    const entries = Array.from({ length: Math.floor(rnd() * 3) }, (_, i) => `"k${i}${rnd() < 0.2 ? '\\u00e9' : ''}":${rnd() < 0.3 ? ' ' : ''}${randomJson(rnd, depth + 1)}`);
    return `{${entries.join(',')}}`;
  }
  if (x < 0.6) return JSON.stringify((rnd() - 0.5) * 10 ** Math.floor(rnd() * 40 - 20));
  if (x < 0.75) return JSON.stringify(['plain', 'tab\there', 'quote " inside', 'back\\slash', 'ü€😀', '/', '\b\f\n\r'][Math.floor(rnd() * 7)]);
  return ['true', 'false', 'null', '0', '-0', '1e5', '-2.5E-3', '"\\u12aB"'][Math.floor(rnd() * 8)]!;
}

/** One byte changed, dropped or doubled: most such texts are not JSON. */
function mutate(rnd: () => number, text: string): string {
  const at = Math.floor(rnd() * text.length);
  const y = rnd();
  if (y < 0.33) return text.slice(0, at) + text.slice(at + 1);
  if (y < 0.66) return text.slice(0, at) + text[at] + text.slice(at);
  return text.slice(0, at) + ',]}[{:"\\01.e-+tnx '[Math.floor(rnd() * 21)] + text.slice(at + 1);
}

function acceptedByJsonParse(text: string): boolean {
  try {
    JSON.parse(text);
    return true;
  } catch {
    return false;
  }
}

describe('skipJsonValue', () => {
  it('accepts exactly what JSON.parse accepts, on 20k seeded values and their one-byte mutants', () => {
    const rnd = seededRandom(31);
    let accepted = 0;
    let refused = 0;
    const wrong: string[] = [];
    for (let i = 0; i < 20_000; i++) {
      const valid = randomJson(rnd, 0);
      // Space around a value is the caller's to skip (the line's loop), so texts with some are left out.
      for (const text of [valid, mutate(rnd, valid)].filter((t) => t === t.trim())) {
        const bytes = Buffer.from(text, 'utf8');
        const skipped = skipJsonValue(bytes, 0, bytes.length, 0);
        // A value followed by more text is a value JSON.parse refuses: the whole text must be one value.
        const ours = skipped === bytes.length;
        if (ours !== acceptedByJsonParse(text)) wrong.push(text);
        if (ours) accepted++;
        else refused++;
      }
    }
    expect(wrong.slice(0, 5)).toEqual([]);
    expect(accepted).toBeGreaterThan(20_000);
    expect(refused).toBeGreaterThan(5_000);
  });

  it('hands over what it does not follow: nesting past 64, a carriage return as space', () => {
    const deep = '['.repeat(70) + ']'.repeat(70);
    expect(skipJsonValue(Buffer.from(deep), 0, deep.length, 0)).toBe(-1);
    const shallow = '['.repeat(60) + ']'.repeat(60);
    expect(skipJsonValue(Buffer.from(shallow), 0, shallow.length, 0)).toBe(shallow.length);
    expect(skipJsonValue(Buffer.from('[1,\r2]'), 0, 6, 0)).toBe(-1);
  });
});

describe('JSON Lines rows with nested fields', () => {
  const row = (r: number) => ({ query: `drill ${Math.floor(r / 10)}`, item: `sku-${r}`, grade: r % 4, score: (r % 89) / 8, locale: r % 3 ? 'en-GB' : 'de-DE' });

  it('read as rows: the nested fields are neither roles nor segments, and the rest reads as without them', async () => {
    const nested = Array.from({ length: 2000 }, (_, r) => ({ ...row(r), features: [r % 7, 0.25, -1e-3], request: { page: r % 3, tags: ['a', 'b'] } }));
    const plain = Array.from({ length: 2000 }, (_, r) => row(r));
    const withNested = await readDump(tmp.file('nested.jsonl', nested.map((o) => JSON.stringify(o)).join('\n') + '\n'));
    const without = await readDump(tmp.file('nested-plain.jsonl', plain.map((o) => JSON.stringify(o)).join('\n') + '\n'));
    expect(withNested.segments.map((s) => s.name)).toEqual(['locale']);
    for (const key of ['query', 'item', 'label', 'score'] as const) expect(Array.from(withNested[key])).toEqual(Array.from(without[key]));
    expect(withNested.segments[0]!.ofRow).toEqual(without.segments[0]!.ofRow);
  });

  it('the byte loop reads past nested fields itself, as JSON.parse reads the line, or hands the line over', async () => {
    const rnd = seededRandom(9);
    const lines: string[] = [];
    for (let r = 0; r < 3000; r++) {
      const features = r === 0 ? '[1, 2]' : randomJson(rnd, 0);
      lines.push(`{"query":"drill ${Math.floor(r / 10)}","item":"sku-${r}","features":${features},"grade":${r % 4},"score":${(r % 89) / 8}}`);
    }
    const path = tmp.file('nested-random.jsonl', lines.join('\n') + '\n');
    const { parsed } = await countingJsonParse(() => readDump(path));
    // The first lines set the keys; every other line is the loop's (their fields are all JSON that nests less than 64).
    expect(parsed).toBe(SHAPE_LINES);
    const [reference, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(path));
    expect(expectSameOutcome(reference, fast)).toBeDefined();
  });

  it.each([['[1,]'], ['[01]'], ['{"a" 1}'], ['["\\x"]'], ['[1 2]'], ['[tru]'], ['[-]'], ['[1.]'], ['{,}'], ['[1e]'], ['{"a":1,}']])(
    'a nested field written %s is refused as JSON.parse refuses it', async (bad) => {
      const lines = [0, 1, 2].map((r) => `{"query":"q","item":"i${r}","features":${r === 2 ? bad : '[0.5]'},"grade":1,"score":0.5}`);
      const [reference, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(tmp.file(`nested-bad-${bad.replace(/\W/g, '_')}.jsonl`, lines.join('\n') + '\n')));
      expect(reference).toBeInstanceOf(Error);
      expect((fast as Error).message).toBe((reference as Error).message);
      expect((fast as Error).message).toMatch(/:3\b/);
    });

  // The command line's report without segments reads with the other fields skipped (ColumnRoles.others): they are
  // not kept, but still checked as a segment's values are, so the same files are accepted or refused.
  it('with other fields skipped, reads the roles as a full read does, keeps no segment, and refuses what a full read refuses', async () => {
    const lines = Array.from({ length: 2000 }, (_, r) => JSON.stringify({ ...row(r), title: `Cordless drill ${r} "pro"`, features: [r, 0.5] }));
    const path = tmp.file('skipped-others.jsonl', lines.join('\n') + '\n');
    const skipped = { columns: { others: 'skipped' as const } };
    const full = await readDump(path);
    const [reference, fast] = await readOffThenOn('jsonLinesFastRows', () => readDump(path, skipped));
    expectSameOutcome(reference, fast);
    const lean = fast as Awaited<ReturnType<typeof readDump>>;
    expect(lean.segments).toEqual([]);
    expect(full.segments.map((s) => s.name)).toEqual(['locale', 'title']);
    for (const key of ['query', 'item', 'label', 'score', 'line'] as const) expect(Array.from(lean[key])).toEqual(Array.from(full[key]));
    // A lone surrogate in a field that would be a segment: refused either way, at its line.
    const bad = [...lines.slice(0, 5), lines[5]!.replace('Cordless', '\\ud800Cordless')].join('\n') + '\n';
    const badPath = tmp.file('skipped-others-bad.jsonl', bad);
    const fullError = await readDump(badPath).catch((e: Error) => e);
    const [badReference, badFast] = await readOffThenOn('jsonLinesFastRows', () => readDump(badPath, skipped));
    expect(fullError).toBeInstanceOf(Error);
    expect((badReference as Error).message).toBe((fullError as Error).message);
    expect((badFast as Error).message).toBe((fullError as Error).message);
  });
});
