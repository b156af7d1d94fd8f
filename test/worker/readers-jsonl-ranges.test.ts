/**
 * JSON Lines read in ranges by several threads (threads/parallel.ts) must read exactly
 * as one thread does: the same rows, ids, grades and scores to the bit, lines, offsets, segments and notes,
 * and the same error (its line counted over the whole file) for bad input. The files are cut at a dozen
 * newlines, so cuts fall next to blank lines, CRLF ends and lines only JSON.parse takes; lines of lists are
 * cut between lists. The parse worker is bundled fresh from source.
 */
import { describe, expect, it } from 'vitest';
import { engineActivity } from '../../extension/engine/config';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import { linesIn } from '../../extension/engine/readers/jsonLinesHead';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { randomJsonLines } from '../engine/fixtures/randomJsonLines';
import { expectSameOutcome, expectSameReading } from '../engine/fixtures/sameReading';
import { seededRandom } from '../reference/random';
import { useBundledWorkers } from './support/workers';

const tmp = new TempDir();

useBundledWorkers(tmp, ['parseWorker']);

/** How the last reading in ranges (readBoth's) was merged: compacted in its shared slices, or by copying, or neither (one thread read it). */
let lastMerge: 'compacted' | 'copied' | 'none' = 'none';

/** One thread's reading and a reading in ranges (3 threads, 4 ranges each), or the error each gave. */
async function readBoth(path: string): Promise<[RankedDump | Error, RankedDump | Error]> {
  const attempt = (threads: number) => readDump(path, { threads }).catch((e: Error) => e);
  const one = await attempt(1);
  const activity = engineActivity();
  const [compacted, copied] = [activity.rangesCompacted, activity.rangesMergedByCopying];
  const ranges = await attempt(3);
  lastMerge = activity.rangesCompacted > compacted ? 'compacted' : activity.rangesMergedByCopying > copied ? 'copied' : 'none';
  return [one, ranges];
}

/** True when readBoth's reading in ranges kept its rows where the ranges wrote them (views of the shared slices). */
function readInRanges(dump: RankedDump): boolean {
  return lastMerge === 'compacted' && dump.score.buffer instanceof SharedArrayBuffer;
}

describe('JSON Lines read in ranges', () => {
  it.each(Array.from({ length: 8 }, (_, i) => [400 + i]))('seed %i reads as one thread reads it (or fails the same way)', async (seed) => {
    // Every other seed without the lines JSON refuses, so most comparisons are of whole dumps.
    const text = randomJsonLines(seed, 6_000);
    const clean = seed % 2 === 0 ? text.split(/\r?\n/).filter((l) => !/"01"|:\s*01|0\.5\.5|sku\\t|\t/.test(l)).join('\n') : text;
    const [one, ranges] = await readBoth(tmp.file(`ranges-${seed}.jsonl`, clean));
    const dump = expectSameOutcome(one, ranges);
    // Only the seeds with lines JSON refuses fail (both the same way).
    if (dump === undefined) expect(seed % 2).toBe(1);
    else {
      expect(readInRanges(ranges as RankedDump)).toBe(true);
      expect(dump.rowCount).toBeGreaterThan(5_000);
    }
  });

  it('reads a byte order mark and blank lines before the first row as one thread does, with CRLF line ends', async () => {
    const lines = Array.from({ length: 4_000 }, (_, r) => `{"query": "sander ${Math.floor(r / 6)}", "product_id": "p-${r}", "grade": ${r % 4}, "score": ${(r % 89) / 7}}`);
    const path = tmp.file('ranges-bom.jsonl', '\ufeff\r\n  \r\n' + lines.join('\r\n') + '\r\n');
    const [oneMarked, rangesMarked] = await readBoth(tmp.file('ranges-bom-row.jsonl', '\ufeff' + lines.join('\r\n') + '\r\n'));
    expect(readInRanges(rangesMarked as RankedDump)).toBe(true);
    expectSameReading(oneMarked as RankedDump, rangesMarked as RankedDump);
    const [one, ranges] = await readBoth(path);
    expect(readInRanges(ranges as RankedDump)).toBe(true);
    expectSameReading(one as RankedDump, ranges as RankedDump);
    expect((one as RankedDump).line[0]).toBe(3);
    // Three bytes of the mark, then CRLF and "  CRLF".
    expect((one as RankedDump).offset[0]).toBe(9);
  });

  it('reports a bad line deep in the file, and a byte that is not UTF-8, at the line one thread names', async () => {
    const lines = Array.from({ length: 5_000 }, (_, r) => `{"query":"saw ${Math.floor(r / 9)}","item":"s-${r}","label":${r % 3},"score":${r / 100}}`);
    const broken = [...lines];
    broken[4_321] = '{"query":"saw","item":"s-x","label":[1],"score":1}';
    const [oneBroken, rangesBroken] = await readBoth(tmp.file('ranges-broken.jsonl', broken.join('\n') + '\n'));
    expect(oneBroken).toBeInstanceOf(Error);
    expect((rangesBroken as Error).message).toBe((oneBroken as Error).message);
    expect((oneBroken as Error).message).toMatch(/:4322\b/);

    const bytes = Buffer.from(lines.join('\n') + '\n');
    const at = bytes.indexOf('s-3777');
    bytes[at + 2] = 0xff;
    const [oneBad, rangesBad] = await readBoth(tmp.file('ranges-bad-byte.jsonl', bytes));
    expect(oneBad).toBeInstanceOf(Error);
    expect((rangesBad as Error).message).toBe((oneBad as Error).message);
  });

  it('reads lines of lists in ranges too, lists of 1 to 40 rows', async () => {
    const rnd = seededRandom(41);
    const lines = Array.from({ length: 3_000 }, (_, q) => {
      const n = 1 + Math.floor(rnd() * 40);
      const items = Array.from({ length: n }, (_, i) => `p${q}-${i}`);
      return JSON.stringify({ query: `plane ${q}`, items, labels: items.map(() => Math.floor(rnd() * 4)), scores: items.map(() => Math.round(rnd() * 1e4) / 1e3) });
    });
    const [one, ranges] = await readBoth(tmp.file('ranges-lists.jsonl', lines.join('\n') + '\n'));
    expect(readInRanges(ranges as RankedDump)).toBe(true);
    expectSameReading(one as RankedDump, ranges as RankedDump);
    expect((one as RankedDump).rowCount).toBeGreaterThan(50_000);
  });

  it('reads lines of lists whose rows outgrow the guess from the head (ranges go on in private arrays), the same rows', async () => {
    // The head's rows are long (a guess of few rows per byte); the rest are short, many to a line.
    const long = Array.from({ length: 900 }, (_, q) => JSON.stringify({ query: `q${q}`, items: ['x'.repeat(200) + q, 'y'.repeat(200) + q], labels: [1, 0], scores: [0.5, 0.25] }));
    const short = Array.from({ length: 2_000 }, (_, q) => {
      const items = Array.from({ length: 60 }, (_, i) => `${i}`);
      return JSON.stringify({ query: `s${q}`, items, labels: items.map((_, i) => i % 3), scores: items.map((_, i) => i / 4) });
    });
    const [one, ranges] = await readBoth(tmp.file('ranges-lists-grow.jsonl', [...long, ...short].join('\n') + '\n'));
    expect(readInRanges(ranges as RankedDump)).toBe(false);
    expect(lastMerge).toBe('copied');
    expectSameReading(one as RankedDump, ranges as RankedDump);
    expect((one as RankedDump).rowCount).toBe(1_800 + 120_000);
  });
  // The shape is learnt from the first lines (readers/jsonLines.ts, SHAPE_LINES) that end within the head a read
  // in ranges reads first: with lines of 5 KB fewer than SHAPE_LINES fit, so one thread must stop where the head does.
  it('learns the shape from the same first lines as one thread: grades on judged rows only, a key first written past the head', async () => {
    const title = 'x'.repeat(5_000);
    const lines = Array.from({ length: 1_200 }, (_, r) => JSON.stringify({ query: `router ${r >> 3}`, item: `bit-${r}`, ...(r % 3 === 0 ? {} : { grade: r % 4 }),
      score: (r % 89) / 7, title, ...(r === 230 || r === 900 ? { device: 'mobile' } : {}), ...(r === 150 ? { locale: 'fr-FR' } : {}) }));
    const [one, ranges] = await readBoth(tmp.file('ranges-shape.jsonl', lines.join('\n') + '\n'));
    expect(readInRanges(ranges as RankedDump)).toBe(true);
    expectSameReading(one as RankedDump, ranges as RankedDump);
    const dump = one as RankedDump;
    expect(dump.segments.map((s) => s.name)).toEqual(['title', 'locale']);
    expect(dump.notes.unjudgedRows).toBe(400);
    expect(dump.notes.messages.find((m) => m.includes('not read'))).toMatch(/^2 lines hold fields .*\('device'; the first on line 231\)/);
  });

  // Lines of a megabyte and more (a query's candidates and their features on one line): the shape is learnt
  // from at least the first LONG_SHAPE_LINES lines, and the head a read in ranges reads first grows to hold them.
  it('learns the shape of long lines from the same first lines as one thread, the head grown past its first MB', async () => {
    const features = Array.from({ length: 30_000 }, (_, i) => (i % 97) / 8);
    const lines = Array.from({ length: 80 }, (_, r) => JSON.stringify({ query: `router ${r >> 2}`, item: `bit-${r}`, ...(r < 6 ? {} : { grade: r % 4 }),
      score: (r % 89) / 7, features, ...(r === 11 ? { locale: 'fr-FR' } : {}), ...(r >= 20 && r % 5 === 0 ? { device: 'mobile' } : {}) }));
    expect(lines[0]!.length).toBeGreaterThan(100_000);
    const [one, ranges] = await readBoth(tmp.file('ranges-long-lines.jsonl', lines.join('\n') + '\n'));
    expect(readInRanges(ranges as RankedDump)).toBe(true);
    expectSameReading(one as RankedDump, ranges as RankedDump);
    const dump = one as RankedDump;
    expect(dump.segments.map((s) => s.name)).toEqual(['locale']);
    expect(dump.notes.unjudgedRows).toBe(6);
    expect(dump.notes.messages.find((m) => m.includes('not read'))).toMatch(/^12 lines hold fields .*\('device'; the first on line 21\)/);
  });

  it('counts lines with a value, not blank ones, when it grows the head for long lines', async () => {
    const features = Array.from({ length: 30_000 }, (_, i) => (i % 97) / 8);
    const rows = Array.from({ length: 60 }, (_, r) => JSON.stringify({ query: `router ${r >> 2}`, item: `bit-${r}`, grade: r % 4,
      score: (r % 89) / 7, features, ...(r === 14 || r > 40 ? { locale: 'fr-FR' } : {}) }));
    // Blank lines among the first: the row on line 19 is the 15th with a value, and the first with a locale.
    const text = [...rows.slice(0, 3), '', '  ', '\t', '', ...rows.slice(3)].join('\n') + '\n';
    const [one, ranges] = await readBoth(tmp.file('ranges-long-blank.jsonl', text));
    expect(readInRanges(ranges as RankedDump)).toBe(true);
    expectSameReading(one as RankedDump, ranges as RankedDump);
    expect((one as RankedDump).segments.map((s) => s.name)).toEqual(['locale']);
    expect(linesIn(Buffer.from('a\n\n \r\nb\r\n\t\nc'), 10)).toBe(2);
    expect(linesIn(Buffer.from('a\nb\nc\n'), 2)).toBe(2);
  });

  it('counts as blank every line the parser trims to nothing (form feed, byte order mark, no-break space), as it grows the head', async () => {
    // Rows of about 320 KB: the head's first growth (4 MB) holds 12 of them and the 5 lines below. Counted as
    // lines with a value, those would stop the head there, short of the 16th row, the first with a locale.
    const features = Array.from({ length: 60_000 }, (_, i) => (i % 97) / 8);
    const rows = Array.from({ length: 24 }, (_, r) => JSON.stringify({ query: `router ${r >> 2}`, item: `bit-${r}`, grade: r % 4,
      score: (r % 89) / 7, features, ...(r >= 15 ? { locale: 'fr-FR' } : {}) }));
    const trimmed = ['\v', '\f', '\ufeff', '\u00a0', ' \u2028\t'];
    const text = [...rows.slice(0, 3), ...trimmed, ...rows.slice(3)].join('\n') + '\n';
    const [one, ranges] = await readBoth(tmp.file('ranges-long-trimmed.jsonl', text));
    expect(readInRanges(ranges as RankedDump)).toBe(true);
    expectSameReading(one as RankedDump, ranges as RankedDump);
    expect((one as RankedDump).segments.map((s) => s.name)).toEqual(['locale']);
    expect(trimmed.every((line) => line.trim() === '')).toBe(true);
    expect(linesIn(Buffer.from(trimmed.join('\n') + '\n{}\n'), 10)).toBe(1);
  });
});
