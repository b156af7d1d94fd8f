/**
 * Parquet's flat columns read page by page (readers/parquetPages.ts) must give exactly the rows of the
 * decoder's own row reader (tuning `parquetPages` off): the same ids, grades and scores to the bit,
 * segments and notes, and the same error. Seeded files vary what the page loop meets: row groups, small
 * pages, nulls in every column, dictionary and plain pages, delta and byte-stream-split encodings, integer,
 * float and text grades and scores; DuckDB writes files with version 1 and version 2 data pages.
 */
import { join } from 'node:path';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { afterAll, describe, expect, it } from 'vitest';
import { configureEngine, engineActivity, engineSettings } from '../../extension/engine/config';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';
import { expectSameOutcome, expectSameReading } from './fixtures/sameReading';

const tmp = new TempDir();
const saved = engineSettings();
afterAll(() => {
  configureEngine(saved);
  tmp.remove();
});

/** One thread's reading with the page loop off (the reference), then on. */
async function readOffThenOn(path: string, sliceRows = 65_536): Promise<[RankedDump | Error, RankedDump | Error]> {
  const attempt = () => readDump(path, { threads: 1 }).catch((e: Error) => e);
  configureEngine({ tuning: { parquetPages: false } });
  const reference = await attempt();
  configureEngine({ tuning: { parquetPages: true, parquetSliceRows: sliceRows } });
  const before = engineActivity().parquetPagePieces;
  const pages = await attempt();
  // The page loop really read it: a piece it gave up on would be read the decoder's way, the same rows.
  if (!(pages instanceof Error)) expect(engineActivity().parquetPagePieces).toBeGreaterThan(before);
  return [reference, pages];
}

function randomFile(seed: number, rows: number): { name: string; bytes: Uint8Array } {
  const rnd = seededRandom(seed);
  const nulls = (share: number) => <T>(v: T): T | null => (rnd() < share ? null : v);
  const gradeType = (['INT32', 'INT64', 'DOUBLE', 'STRING'] as const)[seed % 4]!;
  const scoreType = (['DOUBLE', 'FLOAT', 'DOUBLE', 'STRING'] as const)[(seed >> 1) % 4]!;
  const nullShare = seed % 3 === 0 ? 0 : 0.04;
  const grade = Array.from({ length: rows }, () => nulls(nullShare)(Math.floor(rnd() * 5)));
  const score = Array.from({ length: rows }, () => nulls(nullShare)(Math.round(rnd() * 2e4) / 1e3 - 10));
  const columnData = [
    { name: 'query_id', data: Array.from({ length: rows }, (_, r) => `clamp ${Math.floor(r / 11)}`), type: 'STRING' as const },
    // A null id is refused: only seeds 505 and 511 have one, to compare the errors.
    { name: 'item_id', data: Array.from({ length: rows }, () => nulls(seed % 6 === 5 ? 0.001 : 0)(`sku-${Math.floor(rnd() * (seed % 2 === 0 ? 50 : 1e6))}`)),
      type: 'STRING' as const, ...(seed % 5 === 1 ? { encoding: 'DELTA_BYTE_ARRAY' as const } : {}) },
    { name: 'grade', type: gradeType,
      data: gradeType === 'STRING' ? grade.map((g) => (g === null ? null : String(g))) : gradeType === 'INT64' ? grade.map((g) => (g === null ? null : BigInt(g))) : grade,
      ...(gradeType === 'INT32' && seed % 2 === 1 ? { encoding: 'DELTA_BINARY_PACKED' as const } : {}) },
    { name: 'score', type: scoreType, data: scoreType === 'STRING' ? score.map((s) => (s === null ? null : String(s))) : score,
      ...(scoreType === 'DOUBLE' && seed % 3 === 2 ? { encoding: 'BYTE_STREAM_SPLIT' as const } : {}) },
    { name: 'aisle', data: Array.from({ length: rows }, () => nulls(0.1)(['north', 'south', 'east'][Math.floor(rnd() * 3)]!)), type: 'STRING' as const },
  ];
  const bytes = parquetWriteBuffer({ columnData, rowGroupSize: [700, 1_500, 20_000][seed % 3]!, pageSize: [512, 4096, 1 << 20][(seed >> 2) % 3]! });
  return { name: `pages-${seed}.parquet`, bytes: new Uint8Array(bytes) };
}

describe('Parquet columns read page by page', () => {
  it.each(Array.from({ length: 12 }, (_, i) => [500 + i]))("seed %i reads as the decoder's row reader does", async (seed) => {
    const { name, bytes } = randomFile(seed, 6_000);
    // Slices of rows that end inside pages and inside row groups, or one slice a group.
    const dump = expectSameOutcome(...(await readOffThenOn(tmp.file(name, bytes), seed % 2 === 0 ? 333 : 65_536)));
    // Only the seeds with a null id fail (both the same way).
    expect(dump?.rowCount).toBe(seed % 6 === 5 ? undefined : 6_000);
  });

  it.each([['V1'], ['V2']])('reads DuckDB files with %s data pages, dictionaries and nulls as the decoder does', async (version) => {
    const { DuckDBInstance } = await import('@duckdb/node-api');
    const instance = await DuckDBInstance.create(':memory:');
    const connection = await instance.connect();
    const file = join(tmp.path, `duckdb-${version}.parquet`);
    await connection.run(`COPY (SELECT 'router ' || (i // 13) AS query, 'bit-' || (i * 7919 % 100003) AS item_id,
      CASE WHEN i % 31 = 0 THEN NULL ELSE (i * 13) % 5 END AS grade, CASE WHEN i % 53 = 0 THEN NULL ELSE ((i * 37) % 1000) / 7.0 END AS score,
      CASE WHEN i % 4 = 0 THEN 'mobile' ELSE 'desktop' END AS device
      FROM range(0, 30000) t(i)) TO '${file}' (FORMAT parquet, ROW_GROUP_SIZE 4096, PARQUET_VERSION ${version})`);
    connection.closeSync();
    instance.closeSync();
    const [reference, pages] = await readOffThenOn(file, 1_000);
    expectSameReading(reference as RankedDump, pages as RankedDump);
    expect((reference as RankedDump).rowCount).toBe(30_000);
  });

  it("reports a bad value as the decoder's reader does, naming the row", async () => {
    const buf = parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: Array.from({ length: 3_000 }, (_, r) => `vise ${r >> 4}`), type: 'STRING' },
      { name: 'item_id', data: Array.from({ length: 3_000 }, (_, r) => `v-${r}`), type: 'STRING' },
      { name: 'grade', data: Array.from({ length: 3_000 }, (_, r) => (r === 2_222 ? 'lots' : String(r % 4))), type: 'STRING' },
      { name: 'score', data: Array.from({ length: 3_000 }, (_, r) => r / 10), type: 'DOUBLE' },
    ], rowGroupSize: 1_000, pageSize: 2048 });
    const [reference, pages] = await readOffThenOn(tmp.file('bad-grade.parquet', new Uint8Array(buf)));
    expect(reference).toBeInstanceOf(Error);
    expect((pages as Error).message).toBe((reference as Error).message);
    expect((reference as Error).message).toMatch(/row 2223/);
  });
});
