/**
 * A folder of Parquet parts whose columns differ (parts written over time gain a column, write them in
 * another order, or leave one out): read as the union of the parts' columns by name, a column a part lacks
 * read as missing there, and said in the notes. Outside reference: DuckDB's read_parquet with
 * union_by_name (NULL where a file lacks a column), on the same files DuckDB wrote.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { RankedDump } from '../../extension/engine/model/dump';
import { readDump } from '../../extension/engine/readers/index';
import { TempDir } from './fixtures/readers/tempFiles';
import { duckdb, expectThreeSame } from './fixtures/parquetThreeWays';

const tmp = new TempDir();
afterAll(() => tmp.remove());

type Row = [string, string, number | null, number | null, string | null, string | null];

/** DuckDB's rows of the folder, the parts' columns unified by name, in file and row order. */
async function duckdbRows(folder: string): Promise<Row[]> {
  const { DuckDBInstance } = await import('@duckdb/node-api');
  const instance = await DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  try {
    const reader = await connection.runAndReadAll(`SELECT query, item, grade::DOUBLE, score::DOUBLE, locale, device FROM read_parquet('${folder}/*.parquet',
      union_by_name = true, filename = true, file_row_number = true) ORDER BY filename, file_row_number`);
    return reader.getRows().map((r) => r.map((v) => (v === null ? null : typeof v === 'number' ? v : String(v))) as Row);
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
}

function ourRows(dump: RankedDump): Row[] {
  const segment = (name: string, r: number) => {
    const s = dump.segments.find((x) => x.name === name);
    const v = s?.values.get(s.ofRow[r]!);
    return v === undefined || v === '' ? null : v;
  };
  return Array.from({ length: dump.rowCount }, (_, r) => [dump.queries.get(dump.query[r]!), dump.items.get(dump.item[r]!),
    Number.isNaN(dump.label[r]!) ? null : dump.label[r]!, Number.isNaN(dump.score[r]!) ? null : dump.score[r]!, segment('locale', r), segment('device', r)]);
}

const range = (from: number, to: number) => `range(${from}, ${to}) t(i)`;
const query = `'drill ' || (i // 12) AS query`;
const item = `'sku-' || (i * 7 % 500) AS item`;

describe('a folder of Parquet parts whose columns differ', () => {
  it('reads the union of the parts\' columns by name, as DuckDB does, and names what each part lacks', async () => {
    const folder = join(tmp.path, 'evolving');
    mkdirSync(folder);
    await duckdb(`COPY (SELECT ${query}, ${item}, i % 4 AS grade, (i * 37 % 101) / 10.0 AS score FROM ${range(0, 300)}) TO '${folder}/part-0.parquet' (FORMAT parquet)`);
    // Columns in another order, and a segment the first part lacks.
    await duckdb(`COPY (SELECT (i * 37 % 101) / 10.0 AS score, ${item}, ${query}, i % 4 AS grade, CASE WHEN i % 3 = 0 THEN 'de-DE' ELSE 'en-GB' END AS locale
      FROM ${range(300, 600)}) TO '${folder}/part-1.parquet' (FORMAT parquet, ROW_GROUP_SIZE 100)`);
    // No grade (predictions not yet judged), and another segment.
    await duckdb(`COPY (SELECT ${query}, ${item}, (i * 37 % 101) / 10.0 AS score, 'mobile' AS device FROM ${range(600, 900)}) TO '${folder}/part-2.parquet' (FORMAT parquet)`);
    const { dump } = await expectThreeSame(folder);
    expect(ourRows(dump!)).toEqual(await duckdbRows(folder));
    expect(dump!.notes.unjudgedRows).toBe(300);
    expect(dump!.notes.messages).toContain("part files lack columns others hold: 'grade' from 1 of 3 (part-2.parquet); 'locale' from 2 of 3 "
      + "(part-0.parquet, part-2.parquet); 'device' from 2 of 3 (part-0.parquet, part-1.parquet); read as missing in those files");
    // The same parts with the same columns: no note.
    const same = join(tmp.path, 'same');
    mkdirSync(same);
    for (const [k, from] of [[0, 0], [1, 300]] as const) {
      await duckdb(`COPY (SELECT ${query}, ${item}, i % 4 AS grade, (i * 37 % 101) / 10.0 AS score FROM ${range(from, from + 300)}) TO '${same}/part-${k}.parquet' (FORMAT parquet)`);
    }
    expect((await readDump(same)).notes.messages.filter((m) => m.includes('lack columns'))).toEqual([]);
  });

  it('names only the columns the read uses: a numeric column skipped when no view asks for segments is not in the note', async () => {
    const folder = join(tmp.path, 'extra-number');
    mkdirSync(folder);
    await duckdb(`COPY (SELECT ${query}, ${item}, i % 4 AS grade, i / 10.0 AS score FROM ${range(0, 60)}) TO '${folder}/part-0.parquet' (FORMAT parquet)`);
    await duckdb(`COPY (SELECT ${query}, ${item}, i % 4 AS grade, i / 10.0 AS score, i * 3 AS stock FROM ${range(60, 120)}) TO '${folder}/part-1.parquet' (FORMAT parquet)`);
    const kept = await readDump(folder);
    expect(kept.segments.map((g) => g.name)).toEqual(['stock']);
    expect(kept.notes.messages).toContain("part files lack columns others hold: 'stock' from 1 of 2 (part-0.parquet); read as missing in those files");
    const skipped = await readDump(folder, { columns: { others: 'skipped' } });
    expect(skipped.segments).toEqual([]);
    expect(skipped.notes.messages.filter((m) => m.includes('lack columns'))).toEqual([]);
  });

  it('refuses a part without the item column, naming the part and the column', async () => {
    const folder = join(tmp.path, 'no-item');
    mkdirSync(folder);
    await duckdb(`COPY (SELECT ${query}, ${item}, i % 4 AS grade, i / 10.0 AS score FROM ${range(0, 50)}) TO '${folder}/part-0.parquet' (FORMAT parquet)`);
    await duckdb(`COPY (SELECT ${query}, i % 4 AS grade, i / 10.0 AS score FROM ${range(50, 100)}) TO '${folder}/part-1.parquet' (FORMAT parquet)`);
    await expect(readDump(folder)).rejects.toThrow(/part-1\.parquet: expected the query and item columns in every part file \(item\)/);
  });
});
