/**
 * The WebAssembly record kernel must read exactly what the JavaScript loops read: same rows, ids,
 * labels and scores to the bit, lines, offsets, segments and notes, and the same error for bad
 * input. Random files mix what the kernel takes (plain decimals, repeated queries, simply quoted ids)
 * with what it must hand back (exponents, NaN, empty fields, doubled or multi-line quotes, quoted
 * numbers, CRLF, blank lines, a rank column for the score),
 * read in chunks of random sizes, on one thread and on several. The reference is the same reader
 * with the kernel switched off, itself checked against pandas in readers.test.ts.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import type { ColumnRoles } from '../../extension/engine/readers/roles';
import { configureEngine, DEFAULT_TUNING, engineActivity, engineSettings } from '../../extension/engine/config';
// @ts-expect-error a plain ES module without types
import { compileRecordKernel } from '../../extension/engine/readers/kernel/compile.mjs';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { expectSameReading, readOffThenOn } from './fixtures/sameReading';
import { useBundledWorkers } from '../worker/support/workers';

const tmp = new TempDir();
const kernel = join(tmp.path, 'simpleRecords.wasm');
const savedSettings = engineSettings();

// The parse worker finds the kernel next to itself, as in dist/.
useBundledWorkers(tmp, ['parseWorker']);
beforeAll(async () => {
  await compileRecordKernel(kernel);
}, 120_000);
afterAll(() => {
  configureEngine(savedSettings);
});

/** A score or label as dumps spell them, mostly plain decimals. */
function number(rnd: () => number, label: boolean): string {
  const x = rnd();
  if (label) return x < 0.03 ? '' : x < 0.05 ? '2.0' : String(Math.floor(rnd() * 5));
  if (x < 0.75) return (rnd() * 20 - 10).toFixed(Math.floor(rnd() * 7));
  if (x < 0.8) return (rnd() * 1e-3).toExponential(4);
  if (x < 0.83) return ['NaN', '', 'inf', '-Infinity', '+1.5', '.25', '7.', '-0', '-0.0'][Math.floor(rnd() * 9)]!;
  if (x < 0.86) return '1234567890123456789';
  if (x < 0.88) return '0.' + '1'.repeat(23);
  // Around the largest mantissa the kernel takes (2^53), and 20 digits that are still small.
  if (x < 0.9) return ['9007199254740992', '9007199254740993', '-900719925474099.3', '000000000000000000001.5', '0000000000000000001'][Math.floor(rnd() * 5)]!;
  // Doubles as printers write them (17 digits, exponents), and exponents outside the normal doubles.
  if (x < 0.95) {
    const y = rnd();
    if (y < 0.5) return String((rnd() - 0.5) * 10 ** Math.floor(rnd() * 12 - 6));
    if (y < 0.7) return (rnd() * 4 - 2).toExponential(Math.floor(rnd() * 17)).replace('e', rnd() < 0.5 ? 'E' : 'e');
    return ['1e400', '-1e400', '1e-400', '4.9e-324', '1.e5', '-0e5', '0.00000000000000000000000012345', '12345678901234567890',
      '7e+0300', '1e99999999999'][Math.floor(rnd() * 10)]!;
  }
  return String(Math.floor(rnd() * 1000) - 500);
}

function randomCsv(seed: number, rows: number): string {
  const rnd = seededRandom(seed);
  const rankForScore = rnd() < 0.2;
  const withSegments = rnd() < 0.7;
  const columns = ['query', 'item', 'label', rankForScore ? 'rank' : 'score', ...(withSegments ? ['locale', 'device'] : [])];
  // Shuffle the column order: the kernel must follow any layout.
  for (let i = columns.length - 1; i > 0; i--) {
    const j = Math.floor(rnd() * (i + 1));
    [columns[i], columns[j]] = [columns[j]!, columns[i]!];
  }
  const eol = rnd() < 0.3 ? '\r\n' : '\n';
  const quotes = rnd() < 0.3;
  // Quoted fields in most rows: ids the kernel takes (commas inside), and what it must hand back.
  const heavyQuotes = rnd() < 0.4;
  let out = columns.join(',') + eol;
  let query = 0;
  for (let r = 0; r < rows; r++) {
    if (rnd() < 0.06) query++;
    if (rnd() < 0.01) out += eol;
    const item = Math.floor(rnd() * 3000);
    const value: Record<string, string> = {
      // Some ids longer than the 16 bytes the kernel scans at a time, and a rare control byte inside one.
      query: (rnd() < 0.02 ? `tĕnon saw ${query}` : `mitre saw ${query}`) + (query % 3 === 0 ? ' with a blade longer than sixteen bytes' : ''),
      item: quotes && rnd() < 0.01 ? `"sku,${r}"` : rnd() < 0.005 ? `sku\v${r}` : `sku-${item}${'x'.repeat(item % 37)}`,
      label: number(rnd, true),
      score: number(rnd, false),
      rank: String(1 + (r % 40)),
      locale: rnd() < 0.9 ? 'en-GB' : 'de-DE',
      // One value a prefix of another: a field is the previous row's only when the lengths match too.
      device: ['mobile', 'desktop', 'mobile app'][Math.floor(rnd() * 3)]!,
    };
    if (heavyQuotes) quoteSome(rnd, value, r);
    out += columns.map((c) => value[c]).join(',') + eol;
  }
  return rnd() < 0.5 ? out : out.slice(0, -eol.length);
}

/**
 * Quotes fields as CSV writers do, and some as they rarely do: simply quoted ids (the kernel's), doubled
 * quotes, a line end or a carriage return inside quotes, an empty quoted id, a quoted number, a quote
 * inside an unquoted field (text, not a quote).
 */
function quoteSome(rnd: () => number, value: Record<string, string>, row: number): void {
  const x = rnd();
  if (value.query!.length > 0 && !value.query!.includes('"')) {
    if (x < 0.6) value.query = `"${value.query}"`;
    else if (x < 0.7) value.query = `"${value.query}, corded"`;
  }
  const y = rnd();
  if (y < 0.01) value.query = `"${value.query!.replaceAll('"', '')} ""pro"""`;
  else if (y < 0.015) value.query = `"${value.query!.replaceAll('"', '')}\nsecond line"`;
  else if (y < 0.02) value.query = `"${value.query!.replaceAll('"', '')}\r"`;
  else if (y < 0.025) value.item = '""';
  else if (y < 0.03) value.label = `"${value.label}"`;
  else if (y < 0.035) value.item = `5" nails ${row % 50}`;
  else if (y < 0.045) value.locale = `"${value.locale}"`;
  else if (y < 0.05) value.device = `"${value.device}"`;
  else if (y < 0.06) value.item = `"sku-${row % 300}"`;
}

async function readBoth(path: string, threads: number, columns?: ColumnRoles): Promise<[RankedDump | Error, RankedDump | Error]> {
  return readOffThenOn('recordKernel', () => readDump(path, { threads, ...(columns ? { columns } : {}) }));
}

const expectSameDump = expectSameReading;

describe('the record kernel', () => {
  it('the random files include heavily quoted ones that read without error (the comparisons below are not empty)', async () => {
    const quoted = Array.from({ length: 12 }, (_, i) => randomCsv(100 + i, 6_000)).filter((text) => (text.match(/"/g) ?? []).length > 3000);
    expect(quoted.length).toBeGreaterThanOrEqual(3);
    configureEngine({ tuning: { recordKernel: true } });
    for (const [k, text] of quoted.entries()) expect((await readDump(tmp.file(`kernel-quoted-${k}.csv`, text), { threads: 1 })).rowCount).toBeGreaterThan(5_000);
  });

  it.each(Array.from({ length: 12 }, (_, i) => [100 + i]))('seed %i reads as the JavaScript loops do', async (seed) => {
    const rnd = seededRandom(seed * 7);
    const plainChunkBytes = 500 + Math.floor(rnd() * 40_000);
    // Every other seed: calls that fill after a few rows and pieces of a few records, so both limits are crossed often.
    configureEngine({ tuning: { plainChunkBytes, ...(seed % 2 === 0
      ? { kernelRowsPerCall: 1 + Math.floor(rnd() * 50), kernelPieceBytes: 100 + Math.floor(rnd() * 3000) }
      : { kernelRowsPerCall: DEFAULT_TUNING.kernelRowsPerCall, kernelPieceBytes: DEFAULT_TUNING.kernelPieceBytes }) } });
    const path = tmp.file(`kernel-${seed}.csv`, randomCsv(seed, 6_000));
    for (const threads of [1, 3]) {
      const before = engineActivity().kernelRows;
      const [reference, kernelRead] = await readBoth(path, threads);
      if (reference instanceof Error) {
        expect(kernelRead).toBeInstanceOf(Error);
        expect((kernelRead as Error).message).toBe(reference.message);
        continue;
      }
      expect(kernelRead).not.toBeInstanceOf(Error);
      expectSameDump(reference, kernelRead as RankedDump);
      // On one thread the kernel runs here; it must have taken most rows, not handed them all back.
      if (threads === 1) expect(engineActivity().kernelRows - before).toBeGreaterThan(reference.rowCount / 3);
    }
  });

  // Columns of no role skipped unread (the command line's report when it shows no segments): the kernel and the
  // JavaScript loops must still agree, and every column but the segments must be what a full read gives.
  it.each([[120], [121], [122], [123], [124], [125]])('seed %i with the columns of no role skipped reads as the JavaScript loops do, and as a full read but for the segments', async (seed) => {
    configureEngine({ tuning: { plainChunkBytes: 700 + seed * 31, ...(seed % 2 === 0 ? { kernelRowsPerCall: 7, kernelPieceBytes: 900 } : {}) } });
    const text = randomCsv(seed, 6_000);
    const path = tmp.file(`kernel-skip-${seed}.csv`, text);
    const withSegments = /locale/.test(text.slice(0, text.indexOf('\n')));
    for (const threads of [1, 3]) {
      const before = engineActivity().kernelRows;
      const [reference, kernelRead] = await readBoth(path, threads, { others: 'skipped' });
      // A skipped column must not send its rows back to JavaScript: the kernel takes most of them.
      if (threads === 1 && !(reference instanceof Error)) expect(engineActivity().kernelRows - before).toBeGreaterThan(reference.rowCount / 3);
      const full = await readDump(path, { threads }).catch((e: Error) => e);
      if (full instanceof Error) {
        // The same complaint either way (a skipped column is never the one at fault here: segments take any text).
        expect((kernelRead as Error).message).toBe(full.message);
        expect((reference as Error).message).toBe(full.message);
        continue;
      }
      expectSameDump(reference as RankedDump, kernelRead as RankedDump);
      expectSameDump(full, kernelRead as RankedDump);
      expect((kernelRead as RankedDump).segments).toHaveLength(0);
      expect(full.segments).toHaveLength(withSegments ? 2 : 0);
    }
  });

  // The kernel's rows are summarised as they are handed over, other rows from the columns (columns.ts): one
  // extreme grade anywhere, in a call of any size, must still reach the notes, as must every gap.
  it.each([[1, 16384], [2, 37], [3, 1]])('seed %i: gaps and grade extremes as a full scan finds them (%i rows per kernel call)', async (seed, rowsPerCall) => {
    const rnd = seededRandom(seed);
    const rows = 3000;
    const high = Math.floor(rnd() * rows);
    const low = Math.floor(rnd() * rows);
    let unjudged = 0;
    let missing = 0;
    const lines = ['query,item,label,score'];
    for (let r = 0; r < rows; r++) {
      const gap = r !== high && r !== low && rnd() < 0.02;
      const noScore = rnd() < 0.02;
      if (gap) unjudged++;
      if (noScore) missing++;
      const label = r === high ? '9' : r === low ? '-2' : gap ? '' : '1';
      lines.push(`drill ${Math.floor(r / 50)},sku-${r},${label},${noScore ? 'NaN' : (rnd() * 4).toFixed(2)}`);
    }
    const path = tmp.file(`kernel-gaps-${seed}.csv`, lines.join('\n') + '\n');
    configureEngine({ tuning: { recordKernel: true, kernelRowsPerCall: rowsPerCall, plainChunkBytes: 7001 } });
    for (const threads of [1, 3]) {
      const dump = await readDump(path, { threads });
      expect(dump.notes.gradeRange).toEqual({ lowest: -2, highest: 9 });
      expect(dump.notes.unjudgedRows).toBe(unjudged);
      expect(dump.notes.missingScoreRows).toBe(missing);
    }
    expect(unjudged).toBeGreaterThan(20);
  });

  it('simply quoted ids are the kernel\'s: the text inside the quotes, commas and all, as the careful parser reads it', async () => {
    const lines = ['query,item,label,score'];
    for (let r = 0; r < 3000; r++) lines.push(`"drill, cordless ${Math.floor(r / 7)}","sku-${r}",${r % 5},${(r % 97) / 8}`);
    const path = tmp.file('kernel-quoted.csv', lines.join('\n') + '\n');
    const before = engineActivity().kernelRows;
    const [reference, kernelRead] = await readBoth(path, 1);
    expectSameDump(reference as RankedDump, kernelRead as RankedDump);
    expect(engineActivity().kernelRows - before).toBe(3000);
    expect((kernelRead as RankedDump).queries.get(1)).toBe('drill, cordless 1');
    expect((kernelRead as RankedDump).items.get(2)).toBe('sku-2');
  });

  // ECMAScript's Number() rounds a decimal correctly (the reference); a digit sum kept in a double rounds
  // at 2^53 (9007199254740993 becomes ...992), so numbers whose digits pass 2^53 must not take the fast way.
  it('decimals whose digits pass 2^53 read as Number() reads them, with the kernel and without', async () => {
    const texts = ['90071992547409.93', '-90071992547409.93', '9007199254740993', '900719925474099.3', '9007199254740992.5',
      '9007199254740991.5', '0.9007199254740993', '4503599627370497.5', '1234567890123456.7'];
    const lines = ['query,item,label,score', ...texts.map((t, r) => `q,sku-${r},1,${t}`)];
    const [reference, kernelRead] = await readBoth(tmp.file('kernel-2p53.csv', lines.join('\n') + '\n'), 1);
    for (const dump of [reference, kernelRead] as RankedDump[]) {
      expect(Array.from(dump.score)).toEqual(texts.map(Number));
    }
  });

  // Scores as Python, NumPy or JavaScript print a double: 17 significant digits, or an exponent. The kernel reads
  // them itself (decimalToDouble), to Number()'s bit.
  it('doubles as printers write them are the kernel\'s, and read as Number() reads them', async () => {
    const rnd = seededRandom(5);
    const texts = Array.from({ length: 3000 }, (_, r) => {
      const x = (rnd() - 0.3) * 10 ** Math.floor(rnd() * 14 - 8);
      return r % 3 === 0 ? x.toExponential() : String(x);
    });
    const lines = ['query,item,label,score', ...texts.map((t, r) => `q${Math.floor(r / 20)},sku-${r},${r % 4},${t}`)];
    const before = engineActivity().kernelRows;
    const [reference, kernelRead] = await readBoth(tmp.file('kernel-printed.csv', lines.join('\n') + '\n'), 1);
    expect(engineActivity().kernelRows - before).toBe(3000);
    expectSameDump(reference as RankedDump, kernelRead as RankedDump);
    expect(texts.every((t, r) => Object.is((kernelRead as RankedDump).score[r], Number(t)))).toBe(true);
    expect(texts.filter((t) => /e/.test(t)).length).toBeGreaterThan(1000);
  });

  // Unjudged rows are common (a run's items nobody graded): written empty, or as NaN, NA, null... by the tool that
  // wrote the dump. The kernel reads them as the careful parser does, as missing (delimited.ts, numbers.ts).
  it('missing grades and scores in any spelling are the kernel\'s, read as the careful parser reads them', async () => {
    const words = ['', 'NaN', 'nan', 'NA', 'na', 'N/A', 'n/a', 'null', 'NULL', 'None', 'none', '?'];
    const lines = ['query,item,label,score'];
    let unjudged = 0;
    let missing = 0;
    for (let r = 0; r < 3000; r++) {
      const label = r % 3 === 0 ? words[(r / 3) % words.length]! : String(r % 4);
      const score = r % 5 === 0 ? words[(r / 5) % words.length]! : String((r % 97) / 8);
      if (r % 3 === 0) unjudged++;
      if (r % 5 === 0) missing++;
      lines.push(`q${Math.floor(r / 10)},sku-${r},${label},${score}`);
    }
    const before = engineActivity().kernelRows;
    const [reference, kernelRead] = await readBoth(tmp.file('kernel-missing.csv', lines.join('\n') + '\n'), 1);
    expect(engineActivity().kernelRows - before).toBe(3000);
    expectSameDump(reference as RankedDump, kernelRead as RankedDump);
    expect((kernelRead as RankedDump).notes.unjudgedRows).toBe(unjudged);
    expect((kernelRead as RankedDump).notes.missingScoreRows).toBe(missing);
    // Padded words, a missing rank and words that only look missing go to JavaScript, and read the same.
    const odd = ['query,item,label,rank', 'q,a, NaN ,1', 'q,b,1,', 'q,c,2,NA', 'q,d,nan,3', 'q,e,N/A,4'];
    const [oddReference, oddRead] = (await readBoth(tmp.file('kernel-missing-odd.csv', odd.join('\n') + '\n'), 1)) as [RankedDump, RankedDump];
    expectSameDump(oddReference, oddRead);
    expect(Array.from(oddRead.label, (v) => (Number.isNaN(v) ? 'missing' : v))).toEqual(['missing', 1, 2, 'missing', 'missing']);
    expect(Array.from(oddRead.score, (v) => (Number.isNaN(v) ? 'missing' : v))).toEqual([-1, 'missing', 'missing', -3, -4]);
    // An infinite score is missing too (a grade must be finite: see the refusals below); padding is trimmed.
    const infinite = ['query,item,label,score', 'q,a,1,inf', 'q,b,1,-Infinity', 'q,c,1,1e400', 'q,d,1, 2 '];
    const [infReference, infRead] = (await readBoth(tmp.file('kernel-infinite.csv', infinite.join('\n') + '\n'), 1)) as [RankedDump, RankedDump];
    expectSameDump(infReference, infRead);
    expect(Array.from(infRead.score, (v) => (Number.isNaN(v) ? 'missing' : v))).toEqual(['missing', 'missing', 'missing', 2]);
  });

  it('a file with every field quoted is the kernel\'s, numbers and missing values too', async () => {
    const lines = ['"query","item","label","score"'];
    for (let r = 0; r < 3000; r++) lines.push(`"drill, cordless ${Math.floor(r / 7)}","sku-${r}","${r % 7 === 0 ? '' : r % 5}","${(r % 97) / 8}"`);
    const before = engineActivity().kernelRows;
    const [reference, kernelRead] = await readBoth(tmp.file('kernel-all-quoted.csv', lines.join('\n') + '\n'), 1);
    expect(engineActivity().kernelRows - before).toBe(3000);
    expectSameDump(reference as RankedDump, kernelRead as RankedDump);
    expect((kernelRead as RankedDump).score[3]).toBe(3 / 8);
  });

  // Each call copies a piece of text into the kernel's memory. A call that stops after one record used to be
  // followed by another full piece (1 MB), so a record the careful parser takes on every other line made a
  // 10M-row read take a minute: the copies must stay near what the kernel reads.
  it('records left to the careful parser on every other line cost small copies, not whole pieces', async () => {
    const lines = ['query,item,label,score'];
    for (let r = 0; r < 60_000; r++) lines.push(`${r % 2 === 0 ? `"drill ""pro"" ${r >> 4}"` : `drill ${r >> 4}`},sku-${r},${r % 5},${(r % 97) / 8}`);
    const text = lines.join('\n') + '\n';
    configureEngine({ tuning: { recordKernel: true, kernelPieceBytes: DEFAULT_TUNING.kernelPieceBytes } });
    const before = engineActivity().kernelBytesCopied;
    const [reference, kernelRead] = await readBoth(tmp.file('kernel-every-other.csv', text), 1);
    const copied = engineActivity().kernelBytesCopied - before;
    expectSameDump(reference as RankedDump, kernelRead as RankedDump);
    expect(copied).toBeGreaterThan(0);
    expect(copied).toBeLessThan(text.length + 2 * 4096 * 30_000);
  });

  it.each([
    ['text after a closing quote', 'query,item,label,score\n"q",a,1,0.5\n"q",b,1,0.25\n"q"x,c,1,0.1\n'],
    ['a bad number', 'query,item,label,score\nq,a,1,0.5\nq,b,1,0.25\nq,c,x,0.1\n'],
    ['an infinite grade', 'query,item,label,score\nq,a,1,0.5\nq,b,1,0.25\nq,c,inf,0.1\n'],
    ['a word that only looks missing', 'query,item,label,score\nq,a,1,0.5\nq,b,1,0.25\nq,c,nann,0.1\n'],
    ['a quoted bad number', 'query,item,label,score\nq,a,"1",0.5\nq,b,1,"0.25"\nq,c,"1x",0.1\n'],
    ['an exponent without digits', 'query,item,label,score\nq,a,1,0.5\nq,b,1,0.25\nq,c,1,1e+\n'],
    ['text after an exponent', 'query,item,label,score\nq,a,1,0.5\nq,b,1,0.25\nq,c,1,2E-3x\n'],
    ['an exponent without a number', 'query,item,label,score\nq,a,1,0.5\nq,b,1,0.25\nq,c,e5,0.1\n'],
  ])('%s is reported with its line, as without the kernel', async (what, text) => {
    const [reference, kernelRead] = await readBoth(tmp.file(`kernel-bad-${what.replace(/\W+/g, '-')}.csv`, text), 1);
    expect(reference).toBeInstanceOf(Error);
    expect((kernelRead as Error).message).toBe((reference as Error).message);
    expect((kernelRead as Error).message).toMatch(/:4\b/);
  });
});
