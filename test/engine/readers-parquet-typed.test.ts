/**
 * Parquet pages decoded into typed arrays (readers/parquetTypedPages.ts, stored by parquetStore.ts) must give
 * exactly the rows of the decoder's row reader (tuning `parquetPages` off) and of its page functions
 * (`parquetTypedPages` off): the same ids, grades and scores to the bit, segments and notes, or the same error.
 * Files come from two writers (hyparquet-writer: version 2 pages; DuckDB: version 1 and 2) and vary what the
 * decoder meets: required and optional columns, nulls, dictionary and plain pages, codecs, 32- and 64-bit
 * integers (past 2^53), floats, infinities and NaN, non-ASCII and long text, bytes that are not UTF-8.
 * The run decoder is checked against the Parquet format's own example, an obvious encoder, and the decoder's.
 */
import { join } from 'node:path';
import { readRleBitPackedHybrid } from 'hyparquet/src/encoding.js';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { afterAll, describe, expect, it } from 'vitest';
import { configureEngine, engineSettings } from '../../extension/engine/config';
import { readHybrid } from '../../extension/engine/readers/parquetHybrid';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { duckdb, expectThreeSame, readThreeWays } from './fixtures/parquetThreeWays';

const tmp = new TempDir();
const saved = engineSettings();
afterAll(() => {
  configureEngine(saved);
  tmp.remove();
});

const WORDS = ['Säge', 'ドライバー', 'clamp', 'tuerca ñ', '🔨 hammer', 'x'.repeat(140)];
const encoder = new TextEncoder();

function randomFile(seed: number, rows: number): Uint8Array {
  return randomValues(seed, rows).file;
}

function randomValues(seed: number, rows: number) {
  const rnd = seededRandom(seed);
  const nullable = seed % 2 === 0;
  const orNull = <T>(v: T, share: number): T | null => (nullable && rnd() < share ? null : v);
  const gradeType = (['INT32', 'INT64', 'DOUBLE', 'FLOAT'] as const)[seed % 4]!;
  const scoreType = (['DOUBLE', 'FLOAT', 'INT32', 'INT64'] as const)[(seed >> 2) % 4]!;
  const encoding = ([undefined, 'PLAIN', 'RLE_DICTIONARY'] as const)[seed % 3];
  const pick = () => WORDS[Math.floor(rnd() * WORDS.length)]!;
  const grade = Array.from({ length: rows }, () => {
    const g = rnd() < 0.01 && gradeType === 'INT64' ? 2 ** 53 + 1 + Math.floor(rnd() * 1e6) : Math.floor(rnd() * 5);
    return orNull(gradeType === 'INT64' ? BigInt(g) : g, 0.03);
  });
  const score = Array.from({ length: rows }, () => {
    if (scoreType === 'INT64') return orNull(BigInt(Math.floor((rnd() - 0.5) * 2 ** 62)), 0.03);
    if (scoreType === 'INT32') return orNull(Math.floor((rnd() - 0.5) * 2 ** 31), 0.03);
    const odd = rnd();
    return orNull(odd < 0.01 ? Infinity : odd < 0.02 ? -Infinity : odd < 0.03 ? NaN : (rnd() - 0.5) * 100, 0.03);
  });
  const ranked = seed % 4 === 3;
  const columnData = [
    { name: 'query_id', data: Array.from({ length: rows }, (_, r) => `${WORDS[(r >> 4) % WORDS.length]} ${r >> 4}`), type: 'STRING' as const,
      nullable, ...(encoding ? { encoding } : {}) },
    { name: 'item_id', data: Array.from({ length: rows }, () => `${pick()}-${Math.floor(rnd() * (seed % 5 === 0 ? 40 : 1e6))}`), type: 'STRING' as const,
      nullable, ...(encoding ? { encoding } : {}) },
    { name: 'grade', type: gradeType, data: grade, nullable },
    // Every fourth seed ranks by a rank column instead (score = -rank).
    { name: ranked ? 'rank' : 'score', type: scoreType, data: score, nullable },
    { name: 'aisle', type: 'BYTE_ARRAY' as const, nullable,
      data: Array.from({ length: rows }, () => orNull(rnd() < 0.05 ? new Uint8Array([0x61, 0xff, 0x62]) : encoder.encode(pick()), 0.1)) },
  ];
  const file = new Uint8Array(parquetWriteBuffer({ columnData, rowGroupSize: [700, 2_500, 20_000][seed % 3]!, pageSize: [512, 4096, 1 << 20][(seed >> 1) % 3]!,
    codec: seed % 5 === 2 ? 'UNCOMPRESSED' : 'SNAPPY' }));
  return { file, grade, score, ranked, float: scoreType === 'FLOAT' };
}

describe('Parquet pages decoded typed', () => {
  it.each(Array.from({ length: 16 }, (_, i) => [700 + i]))('seed %i reads as the decoder does, three ways', async (seed) => {
    const path = tmp.file(`typed-${seed}.parquet`, randomFile(seed, 5_000));
    // Slices that end inside pages and row groups on odd seeds.
    const { dump, typedPages } = await expectThreeSame(path, seed % 2 === 1 ? 257 : 65_536);
    expect(dump?.rowCount).toBe(5_000);
    expect(typedPages).toBeGreaterThan(0);
    // And the values themselves, as the data says (common practice: a missing or infinite score is missing;
    // ranked by a rank column, score = -rank).
    const { grade, score, ranked, float } = randomValues(seed, 5_000);
    const asNumber = (v: number | bigint | null) => (v === null ? NaN : Number(v));
    const asScore = (v: number | bigint | null) => (float ? Math.fround(asNumber(v)) : asNumber(v));
    expect(Array.from(dump!.label)).toEqual(grade.map(asNumber));
    expect(Array.from(dump!.score)).toEqual(score.map((v) => (ranked ? -1 : 1) * (Number.isFinite(asScore(v)) ? asScore(v) : NaN)));
  });

  const codecs = [['1', 'SNAPPY'], ['2', 'SNAPPY'], ['1', 'ZSTD'], ['2', 'UNCOMPRESSED'], ['1', 'GZIP']] as const;
  it.each(codecs)('reads DuckDB files with version %s pages, %s, of every integer width, floats and text as the decoder does', async (version, codec) => {
    const file = join(tmp.path, `duckdb-typed-${version}-${codec}.parquet`);
    await duckdb(`COPY (SELECT CASE WHEN i % 97 = 0 THEN NULL ELSE 'Bohrer ' || (i // 9) || ' ' || repeat('ü', (i // 9) % 70) END AS query,
      CASE WHEN i % 3 = 0 THEN 'ドリル-' || i ELSE 'bit-' || (i * 7919 % 100003) END AS item_id,
      (CASE WHEN i % 31 = 0 THEN NULL ELSE (i * 13) % 5 END)::${['TINYINT', 'SMALLINT', 'INTEGER', 'BIGINT'][Number(codec.length) % 4]} AS grade,
      CASE WHEN i % 53 = 0 THEN NULL WHEN i % 89 = 0 THEN 'inf'::DOUBLE WHEN i % 83 = 0 THEN 'nan'::DOUBLE ELSE ((i * 37) % 1000) / 7.0 END
        ${codec === 'ZSTD' ? '::FLOAT' : ''} AS score,
      CASE WHEN i % 4 = 0 THEN 'mobile' WHEN i % 4 = 1 THEN NULL ELSE 'desktop' END AS device,
      CASE WHEN i % 5 = 0 THEN '\\xFF\\x41'::BLOB ELSE ('shelf ' || (i % 7))::BLOB END AS shelf
      FROM range(0, 40000) t(i)) TO '${file}' (FORMAT parquet, ROW_GROUP_SIZE 8192, PARQUET_VERSION V${version}, COMPRESSION ${codec})`);
    // The null queries are refused; the same row, the same words, all three ways.
    const { dump } = await expectThreeSame(file, 3_000);
    expect(dump).toBeUndefined();
    const ok = join(tmp.path, `duckdb-typed-ok-${version}-${codec}.parquet`);
    await duckdb(`COPY (SELECT * REPLACE (coalesce(query, 'none') AS query) FROM '${file}') TO '${ok}'
      (FORMAT parquet, ROW_GROUP_SIZE 8192, PARQUET_VERSION V${version}, COMPRESSION ${codec})`);
    const read = await expectThreeSame(ok, 3_000);
    expect(read.dump?.rowCount).toBe(40_000);
    expect(read.typedPages).toBeGreaterThan(0);
  });

  it('reads 64-bit integers past 2^53 rounded as Number(bigint) rounds them', async () => {
    const big = [2n ** 53n + 1n, 2n ** 53n + 3n, -(2n ** 62n) - 1n, 2n ** 63n - 1n, -(2n ** 63n), 123456789012345678n, -1n, 0n];
    const path = tmp.file('big.parquet', new Uint8Array(parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: big.map(() => 'wrench'), type: 'STRING' },
      { name: 'item_id', data: big.map((_, i) => `w-${i}`), type: 'STRING' },
      { name: 'grade', data: big, type: 'INT64' },
      { name: 'score', data: big, type: 'INT64', encoding: 'PLAIN' },
    ] })));
    const { dump } = await expectThreeSame(path);
    expect(Array.from(dump!.label)).toEqual(big.map((b) => Number(b)));
  });

  // Ids are often numbers (item_id BIGINT): printed as the decoder's number (INT32) or bigint (INT64) prints,
  // extremes and values past 2^53 included, through plain and dictionary pages, with a numeric segment with nulls.
  it.each([[0, 'PLAIN'], [1, 'RLE_DICTIONARY'], [2, undefined]] as const)('seed %i: integer ids (%s pages) read as their printed digits, three ways', async (seed, encoding) => {
    const rnd = seededRandom(40 + seed);
    const rows = 6_000;
    const extremes = [0n, -1n, 2n ** 53n - 1n, 2n ** 53n, 2n ** 53n + 1n, -(2n ** 53n) - 7n, 2n ** 63n - 1n, -(2n ** 63n), 4294967295n, -4294967296n];
    const item = Array.from({ length: rows }, (_, r) => (r < extremes.length ? extremes[r]! : BigInt(Math.floor((rnd() - 0.5) * 2 ** 40)) * BigInt(r % 3 === 0 ? 1 : 100_003)));
    const query = Array.from({ length: rows }, (_, r) => (r >> 4) * (r % 32 < 16 ? 1 : -1) + (r === 20 ? 2 ** 31 - 1 : r === 40 ? -(2 ** 31) : 0));
    const shelf = Array.from({ length: rows }, (_, r) => (r % 7 === 0 ? null : r % 11));
    const path = tmp.file(`integer-ids-${seed}.parquet`, new Uint8Array(parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: query, type: 'INT32', ...(encoding ? { encoding } : {}) },
      { name: 'item_id', data: item, type: 'INT64', ...(encoding ? { encoding } : {}) },
      { name: 'grade', data: Array.from({ length: rows }, (_, r) => r % 5), type: 'INT32' },
      { name: 'score', data: Array.from({ length: rows }, () => rnd()), type: 'DOUBLE' },
      { name: 'shelf', data: shelf, type: 'INT32', nullable: true },
    ], rowGroupSize: 2_500, pageSize: 4096 })));
    const { dump, typedPages } = await expectThreeSame(path, seed === 1 ? 257 : 65_536);
    expect(typedPages).toBeGreaterThan(0);
    const read = dump!;
    // Independent of the decoder: each id is the integer's decimal text (ECMA-262 Number and BigInt toString).
    expect(Array.from({ length: rows }, (_, r) => read.items.get(read.item[r]!))).toEqual(item.map(String));
    expect(Array.from({ length: rows }, (_, r) => read.queries.get(read.query[r]!))).toEqual(query.map(String));
    expect(read.segments[0]!.values.get(read.segments[0]!.ofRow[7]!)).toBe('');
  });

  it('reads DuckDB files of INTEGER and BIGINT ids, version 1 and 2 pages, as the decoder does', async () => {
    for (const version of ['1', '2']) {
      const file = join(tmp.path, `duckdb-integer-ids-${version}.parquet`);
      await duckdb(`COPY (SELECT (i // 10)::INTEGER AS query_id, (i * 2654435761 - 9000000000000000000)::BIGINT AS item_id, (i % 5)::TINYINT AS grade,
        ((i * 37) % 1000) / 7.0 AS score, (i % 3)::BIGINT AS store_id FROM range(0, 30000) t(i))
        TO '${file}' (FORMAT parquet, ROW_GROUP_SIZE 8192, PARQUET_VERSION V${version})`);
      const read = await expectThreeSame(file, 3_000);
      expect(read.dump?.rowCount).toBe(30_000);
      expect(read.typedPages).toBeGreaterThan(0);
      expect(read.dump!.items.get(read.dump!.item[1]!)).toBe(String(2654435761n - 9000000000000000000n));
    }
  });

  it.each([
    ['an item id that is not UTF-8, in a plain page', 'item_id', 'PLAIN'],
    ['a query that is not UTF-8, in a dictionary', 'query_id', 'RLE_DICTIONARY'],
    ['a null item id', 'item_id', 'PLAIN'],
  ] as const)('refuses %s as the decoder does, naming the row', async (what, column, encoding) => {
    const rows = 3_000;
    const bad = 2_222;
    const text = (prefix: string) => Array.from({ length: rows }, (_, r): Uint8Array | null =>
      r === bad && column === (prefix === 'q' ? 'query_id' : 'item_id') ? (what.includes('null') ? null : new Uint8Array([0x71, 0xc3]))
        // The item after the bad one is 140 bytes long: its length's first byte (0x8c) would complete the bad
        // value's last byte (0xc3) were the page's values checked together.
        : encoder.encode(prefix === 'q' ? `q-${r >> 4}` : `i-${r}`.padEnd(r === bad + 1 ? 140 : 0, '.')));
    const path = tmp.file(`bad-${column}-${encoding}-${what.length}.parquet`, new Uint8Array(parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: text('q'), type: 'BYTE_ARRAY', encoding: column === 'query_id' ? encoding : 'PLAIN' },
      { name: 'item_id', data: text('i'), type: 'BYTE_ARRAY', encoding: column === 'item_id' ? encoding : 'PLAIN' },
      { name: 'grade', data: Array.from({ length: rows }, (_, r) => r % 4), type: 'INT32' },
      { name: 'score', data: Array.from({ length: rows }, (_, r) => r / 10), type: 'DOUBLE' },
    ], rowGroupSize: 1_000, pageSize: 2048 })));
    const { reference, pages, typed, typedPages } = await readThreeWays(path, 333);
    expect(reference).toBeInstanceOf(Error);
    expect((reference as Error).message).toMatch(new RegExp(`row ${bad + 1}\\b`));
    expect((pages as Error).message).toBe((reference as Error).message);
    expect((typed as Error).message).toBe((reference as Error).message);
    expect(typedPages).toBeGreaterThan(0);
  });

  it('refuses an infinite grade, and takes an infinite score as missing, as the decoder does', async () => {
    const write = (grade: number) => new Uint8Array(parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: ['saw', 'saw', 'saw'], type: 'STRING' },
      { name: 'item_id', data: ['s-1', 's-2', 's-3'], type: 'STRING' },
      { name: 'grade', data: [1, grade, 0], type: 'DOUBLE' },
      { name: 'score', data: [Infinity, -Infinity, 0.5], type: 'DOUBLE' },
    ] }));
    const refused = await readThreeWays(tmp.file('inf-grade.parquet', write(Infinity)));
    expect((refused.reference as Error).message).toMatch(/finite number in column 'grade' in row 2/);
    expect((refused.typed as Error).message).toBe((refused.reference as Error).message);
    const { dump } = await expectThreeSame(tmp.file('inf-score.parquet', write(2)));
    expect(Array.from(dump!.score)).toEqual([NaN, NaN, 0.5]);
  });

  it('reads a NaN with a payload as the one NaN the decoder path gives, negated under a rank column', async () => {
    const write = (scoreName: string) => new Uint8Array(parquetWriteBuffer({ codec: 'UNCOMPRESSED', statistics: false, columnData: [
      { name: 'query_id', data: ['saw', 'saw'], type: 'STRING' },
      { name: 'item_id', data: ['s-1', 's-2'], type: 'STRING' },
      { name: 'grade', data: [1, 0], type: 'INT32' },
      { name: scoreName, data: [NaN, 0.5], type: 'DOUBLE', encoding: 'PLAIN', nullable: false },
    ] }));
    for (const scoreName of ['score', 'rank']) {
      const bytes = write(scoreName);
      // The writer's NaN (0x7ff8000000000000, little-endian) given a payload.
      const canonical = Buffer.from([0, 0, 0, 0, 0, 0, 0xf8, 0x7f]);
      const at = Buffer.from(bytes).indexOf(canonical);
      expect(at).toBeGreaterThan(0);
      bytes[at] = 1;
      const { dump } = await expectThreeSame(tmp.file(`nan-${scoreName}.parquet`, bytes));
      expect(Number.isNaN(dump!.score[0])).toBe(true);
    }
  });

  it('gives up on a page it cannot take and lets the decoder read the rest the same way', async () => {
    // Delta-encoded text and numbers are the decoder's; the typed columns beside them are not.
    const rows = 4_000;
    const path = tmp.file('mixed.parquet', new Uint8Array(parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: Array.from({ length: rows }, (_, r) => `level ${r >> 5}`), type: 'STRING' },
      { name: 'item_id', data: Array.from({ length: rows }, (_, r) => `lv-${r}`), type: 'STRING', encoding: 'DELTA_BYTE_ARRAY' },
      { name: 'grade', data: Array.from({ length: rows }, (_, r) => r % 3), type: 'INT32', encoding: 'DELTA_BINARY_PACKED' },
      { name: 'score', data: Array.from({ length: rows }, (_, r) => Math.sin(r)), type: 'DOUBLE', encoding: 'BYTE_STREAM_SPLIT' },
    ], rowGroupSize: 1_500, pageSize: 1024 })));
    const { dump, typedPages } = await expectThreeSame(path, 700);
    expect(dump?.rowCount).toBe(rows);
    expect(typedPages).toBeGreaterThan(0);
  });
});


/** The hybrid the obvious way: each run's header, then an RLE value or the values bit by bit, least significant first. */
function encodeHybrid(runs: readonly { readonly rle: boolean; readonly values: readonly number[] }[], width: number): Uint8Array {
  const out: number[] = [];
  const uleb = (n: number) => {
    do {
      const b = n % 128;
      n = Math.floor(n / 128);
      out.push(n > 0 ? b | 128 : b);
    } while (n > 0);
  };
  for (const run of runs) {
    if (run.rle) {
      uleb(run.values.length * 2);
      for (let i = 0; i < Math.ceil(width / 8); i++) out.push(Math.floor(run.values[0]! / 2 ** (8 * i)) % 256);
      continue;
    }
    const groups = Math.ceil(run.values.length / 8);
    uleb(groups * 2 + 1);
    const bits: number[] = [];
    for (let v = 0; v < groups * 8; v++) for (let b = 0; b < width; b++) bits.push(Math.floor((run.values[v] ?? 0) / 2 ** b) % 2);
    for (let i = 0; i < bits.length; i += 8) out.push(bits.slice(i, i + 8).reduce((byte, bit, k) => byte + bit * 2 ** k, 0));
  }
  return new Uint8Array(out);
}

describe('the RLE/bit-packed hybrid', () => {
  it("decodes the Parquet format's example: 0 to 7 bit-packed at width 3 are the bytes 10001000 11000110 11111010", () => {
    // Encodings.md, "Run Length Encoding / Bit-Packing Hybrid" (from memory; the bytes re-derived by hand: least significant bits first).
    const out = new Int32Array(8);
    readHybrid(new Uint8Array([0b11, 0b10001000, 0b11000110, 0b11111010]), 0, 4, 3, out, 8);
    expect(Array.from(out)).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
  });

  it('decodes random runs as an obvious encoder wrote them, and as the decoder reads them', () => {
    const rnd = seededRandom(91);
    for (let trial = 0; trial < 300; trial++) {
      const width = Math.floor(rnd() * 25);
      const count = 1 + Math.floor(rnd() * 6);
      const runs = Array.from({ length: count }, (_, k) => {
        const rle = rnd() < 0.5;
        // Only the last bit-packed run may end in padding (values past the last one wanted).
        const n = rle ? 1 + Math.floor(rnd() * 300) : k === count - 1 ? 1 + Math.floor(rnd() * 40) : 8 * (1 + Math.floor(rnd() * 5));
        const value = () => Math.floor(rnd() * 2 ** width);
        const one = value();
        return { rle, values: Array.from({ length: n }, () => (rle ? one : value())) };
      });
      const expected = runs.flatMap((r) => r.values);
      const bytes = encodeHybrid(runs, width);
      const out = new Int32Array(expected.length);
      readHybrid(bytes, 0, bytes.length, width, out, expected.length);
      expect(Array.from(out)).toEqual(expected);
      // The decoder reads a byte for a bit-packed run of width 0 (which no writer makes: a one-entry dictionary is width 0 without runs).
      if (width === 0) continue;
      const theirs = new Array<number>(expected.length);
      readRleBitPackedHybrid({ view: new DataView(bytes.buffer), offset: 0 }, width, theirs, bytes.length);
      expect(theirs).toEqual(expected);
    }
  });

  it('throws when the runs end before the values do', () => {
    const bytes = encodeHybrid([{ rle: false, values: [1, 2, 3, 4, 5, 6, 7, 0] }], 3);
    expect(() => readHybrid(bytes, 0, bytes.length - 1, 3, new Int32Array(8), 8)).toThrow();
    expect(() => readHybrid(bytes, 0, bytes.length, 3, new Int32Array(9), 9)).toThrow();
  });
});
