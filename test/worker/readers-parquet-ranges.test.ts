/**
 * Parquet read by several threads (threads/parquetRanges.ts) must read exactly as one thread does: the same
 * rows, ids, grades and scores to the bit, segments and notes, and the same error for bad data. Files have
 * many row groups, one row group cut inside, or several part files; the parse worker is bundled fresh.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { describe, expect, it } from 'vitest';
import { engineActivity } from '../../extension/engine/config';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import type { ParquetPiece } from '../../extension/engine/readers/parquet';
import { cutPieces } from '../../extension/engine/threads/parquetRanges';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { expectSameReading } from '../engine/fixtures/sameReading';
import { seededRandom } from '../reference/random';
import { useBundledWorkers } from './support/workers';

const tmp = new TempDir();

useBundledWorkers(tmp, ['parseWorker']);

/** Seeded rows as Parquet columns: queries in runs, items repeating within and across queries, some nulls. */
function randomColumns(seed: number, rows: number, from = 0) {
  const rnd = seededRandom(seed);
  const query: string[] = [];
  const item: (string | null)[] = [];
  const grade: (number | null)[] = [];
  const score: (number | null)[] = [];
  const store: (string | null)[] = [];
  for (let r = 0; r < rows; r++) {
    query.push(`hinge ${Math.floor((from + r) / 13)}${r % 50 === 0 ? ' ø' : ''}`);
    item.push(`sku-${Math.floor(rnd() * 3000)}`);
    grade.push(rnd() < 0.05 ? null : Math.floor(rnd() * 5));
    score.push(rnd() < 0.02 ? null : Math.round(rnd() * 2e4) / 1e3 - 10);
    store.push(rnd() < 0.1 ? null : rnd() < 0.5 ? 'north' : 'south');
  }
  return [
    { name: 'query_id', data: query, type: 'STRING' as const },
    { name: 'item_id', data: item, type: 'STRING' as const },
    { name: 'grade', data: grade, type: 'INT32' as const },
    { name: 'score', data: score, type: 'DOUBLE' as const },
    { name: 'store', data: store, type: 'STRING' as const },
  ];
}

function parquetFile(name: string, columnData: ReturnType<typeof randomColumns>, rowGroupSize: number): string {
  return tmp.file(name, new Uint8Array(parquetWriteBuffer({ columnData, rowGroupSize })));
}

/** Whether readBoth's reading on several threads was shared among threads (its ranges then compacted in place). */
let lastShared = false;

/** One thread's reading and one shared among 3 threads, or the error each gave. */
async function readBoth(path: string): Promise<[RankedDump | Error, RankedDump | Error]> {
  const attempt = (threads: number) => readDump(path, { threads }).catch((e: Error) => e);
  const one = await attempt(1);
  const compacted = engineActivity().rangesCompacted;
  const many = await attempt(3);
  lastShared = engineActivity().rangesCompacted > compacted;
  return [one, many];
}

function shared(dump: RankedDump | Error): boolean {
  return !(dump instanceof Error) && lastShared && dump.score.buffer instanceof SharedArrayBuffer;
}

/** The reading shared among threads (its columns in shared memory) is the one thread's, `rows` rows. */
function expectSameShared(one: RankedDump | Error, many: RankedDump | Error, rows: number): void {
  expect(shared(many)).toBe(true);
  expectSameReading(one as RankedDump, many as RankedDump);
  expect((one as RankedDump).rowCount).toBe(rows);
}

describe('Parquet read on several threads', () => {
  it.each([[11, 997], [12, 250], [13, 4_000]])('seed %i, row groups of %i rows, reads as one thread reads it', async (seed, groupRows) => {
    const [one, many] = await readBoth(parquetFile(`groups-${seed}.parquet`, randomColumns(seed, 9_000), groupRows));
    expectSameShared(one, many, 9_000);
  });

  it('reads a file of one row group on one thread (a group is never cut), the same rows', async () => {
    const [one, many] = await readBoth(parquetFile('one-group.parquet', randomColumns(14, 9_000), 20_000));
    expect(shared(many)).toBe(false);
    expectSameReading(one as RankedDump, many as RankedDump);
  });

  it('reads a folder of part files with row groups of different sizes as one thread does', async () => {
    const dir = join(tmp.path, 'parts');
    mkdirSync(dir);
    writeFileSync(join(dir, 'part-0.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: randomColumns(21, 2_500), rowGroupSize: 700 })));
    writeFileSync(join(dir, 'part-1.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: randomColumns(22, 4_000, 2_500), rowGroupSize: 4_000 })));
    writeFileSync(join(dir, 'part-2.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: randomColumns(23, 1_200, 6_500), rowGroupSize: 300 })));
    expectSameShared(...(await readBoth(dir)), 7_700);
  });

  it('reports an item that is not UTF-8 in a later part, and a part missing a column, as one thread does', async () => {
    const dir = join(tmp.path, 'bad-bytes');
    mkdirSync(dir);
    const columns = randomColumns(31, 3_000);
    const bytes = (columns[1]!.data as string[]).map((s, r) => (r === 2_345 ? Uint8Array.from([0x73, 0xe9]) : new TextEncoder().encode(s)));
    writeFileSync(join(dir, 'part-0.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: randomColumns(30, 3_000), rowGroupSize: 500 })));
    writeFileSync(join(dir, 'part-1.parquet'), new Uint8Array(parquetWriteBuffer({
      columnData: columns.map((c) => (c.name === 'item_id' ? { name: 'item_id', data: bytes, type: 'BYTE_ARRAY' as const } : c)), rowGroupSize: 500 })));
    const [one, many] = await readBoth(dir);
    expect(one).toBeInstanceOf(Error);
    expect((many as Error).message).toBe((one as Error).message);
    expect((one as Error).message).toMatch(/part-1\.parquet.*row 2346/);

    const missing = join(tmp.path, 'missing-column');
    mkdirSync(missing);
    writeFileSync(join(missing, 'part-0.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: randomColumns(32, 2_000), rowGroupSize: 500 })));
    writeFileSync(join(missing, 'part-1.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: randomColumns(33, 2_000).filter((c) => c.name !== 'store') })));
    // A part without a segment column reads it as missing there, and the note says so, on any number of threads.
    const [oneMissing, manyMissing] = await readBoth(missing);
    expectSameReading(oneMissing as RankedDump, manyMissing as RankedDump);
    expect(shared(manyMissing)).toBe(true);
    const store = (oneMissing as RankedDump).segments.find((g) => g.name === 'store')!;
    expect(store.values.get(store.ofRow[2_500]!)).toBe('');
    expect((oneMissing as RankedDump).notes.messages).toContain("part files lack columns others hold: 'store' from 1 of 2 (part-1.parquet); read as missing in those files");
    // A part without the item column is refused, the same way.
    const noItem = join(tmp.path, 'missing-item');
    mkdirSync(noItem);
    writeFileSync(join(noItem, 'part-0.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: randomColumns(34, 2_000), rowGroupSize: 500 })));
    writeFileSync(join(noItem, 'part-1.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: randomColumns(35, 2_000).filter((c) => c.name !== 'item_id') })));
    const [oneNoItem, manyNoItem] = await readBoth(noItem);
    expect((manyNoItem as Error).message).toBe((oneNoItem as Error).message);
    expect((oneNoItem as Error).message).toMatch(/part-1\.parquet: expected the query and item columns in every part file \(item_id\)/);
  });
});

describe('taking Parquet row groups together into tasks', () => {
  it('keeps every group whole and in order, in tasks of at least the target but for the last', () => {
    const rnd = seededRandom(5);
    for (let trial = 0; trial < 200; trial++) {
      const pieces: ParquetPiece[] = [];
      let part = 0;
      let start = 0;
      for (let g = 0; g < 1 + Math.floor(rnd() * 12); g++) {
        if (rnd() < 0.3) {
          part++;
          start = 0;
        }
        const rows = Math.floor(rnd() * 500);
        pieces.push({ part: `p${part}`, start, end: start + rows });
        start += rows;
      }
      const target = 1 + Math.floor(rnd() * 700);
      const tasks = cutPieces(pieces, target);
      const rows = tasks.map((t) => t.reduce((n, p) => n + p.end - p.start, 0));
      expect(rows.slice(0, -1).every((n) => n >= target)).toBe(true);
      // Every group with rows exactly once, whole and in order; empty groups are left out.
      expect(tasks.flat()).toEqual(pieces.filter((p) => p.end > p.start));
      // A task stops as soon as it holds the target.
      for (const task of tasks) expect(task.slice(0, -1).reduce((n, p) => n + p.end - p.start, 0)).toBeLessThan(target);
    }
  });
});
