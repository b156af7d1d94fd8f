/**
 * JSON Lines, run files with judgments, sparse feature lines with a scores file, Parquet, and format detection.
 * Expected values are derived by hand from the files written in each test.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../extension/engine/errors';
import { readDump } from '../../extension/engine/readers/index';
import { plainRows, TempDir } from './fixtures/readers/tempFiles';

const tmp = new TempDir();
afterAll(() => tmp.remove());

async function rejection(p: Promise<unknown>): Promise<InputError> {
  const err = await p.then(() => undefined, (e: unknown) => e);
  expect(err).toBeInstanceOf(InputError);
  return err as InputError;
}

const simple = (rows: ReturnType<typeof plainRows>) => rows.map((r) => [r.query, r.item, r.label, r.score]);

describe('JSON Lines', () => {
  it('reads one row per line with segments, nulls and numeric ids', async () => {
    const path = tmp.file('rows.jsonl', [
      '{"query_id": "paint roller", "item_id": "sku-1", "label": 2, "score": 0.8, "locale": "en"}',
      '',
      '{"query_id": "paint roller", "item_id": 17, "label": null, "score": "0.25", "locale": "fr"}',
    ].join('\n'));
    const dump = await readDump(path);
    expect(dump.format).toBe('jsonl');
    expect(simple(plainRows(dump))).toEqual([['paint roller', 'sku-1', 2, 0.8], ['paint roller', '17', NaN, 0.25]]);
    expect(plainRows(dump).map((r) => [r.line, r.segments['locale']])).toEqual([[1, 'en'], [3, 'fr']]);
    expect(dump.notes.unjudgedRows).toBe(1);
  });

  it('reads one list per line; rows share the line and offset', async () => {
    const text = '{"query": "wall plugs 6mm", "items": ["a", "b", "c"], "labels": [1, 0, 2], "scores": [0.3, 0.2, 0.9]}\n'
      + '{"query": "masking tape", "items": ["d"], "labels": [0], "scores": [null]}\n';
    const dump = await readDump(tmp.file('lists.json', text));
    expect(simple(plainRows(dump))).toEqual([
      ['wall plugs 6mm', 'a', 1, 0.3], ['wall plugs 6mm', 'b', 0, 0.2], ['wall plugs 6mm', 'c', 2, 0.9], ['masking tape', 'd', 0, NaN],
    ]);
    expect(Array.from(dump.line)).toEqual([1, 1, 1, 2]);
    expect(Array.from(dump.offset)).toEqual([0, 0, 0, text.indexOf('\n') + 1]);
    expect(dump.notes.missingScoreRows).toBe(1);
  });

  it('rejects arrays of unequal length and broken lines, naming the line', async () => {
    const unequal = tmp.file('unequal.jsonl', '{"query": "q", "items": ["a", "b"], "labels": [1], "scores": [0.1, 0.2]}\n');
    const err = await rejection(readDump(unequal));
    expect(err.message).toMatch(/arrays of equal length/);
    expect(err.line).toBe(1);
    const broken = tmp.file('broken.jsonl', '{"qid": "q", "item_id": "a", "label": 1, "score": 1}\n{"qid": "q", "item_id": "b", "label": 1, "sco\n');
    const err2 = await rejection(readDump(broken));
    expect(err2.message).toContain(`${broken}:2: expected a JSON object on each line`);
  });
});

describe('run file with a judgments file', () => {
  const run = [
    'hex-key-set\tQ0\tsku-1\t1\t2.5\tbaseline',
    'hex-key-set\tQ0\tsku-2\t2\t3.5\tbaseline',
    'hex-key-set Q0 sku-3 3 1.0 baseline',
    'garden-hose Q0 sku-9 1 0.5 baseline',
  ].join('\n') + '\n';
  const judgments = [
    'hex-key-set 0 sku-1 2',
    'hex-key-set 0 sku-3 0',
    'hex-key-set 0 sku-4 1',
    'pipe-wrench 0 sku-5 1',
    'pipe-wrench 0 sku-6 0',
  ];

  it('joins grades, ranks by score, and counts every gap', async () => {
    const runFile = tmp.file('a.run', run);
    const judged = tmp.file('a.judgments', judgments.join('\n'));
    const dump = await readDump(runFile, { judgments: judged });
    expect(dump.format).toBe('run');
    expect(simple(plainRows(dump))).toEqual([
      ['hex-key-set', 'sku-1', 2, 2.5], ['hex-key-set', 'sku-2', NaN, 3.5], ['hex-key-set', 'sku-3', 0, 1], ['garden-hose', 'sku-9', NaN, 0.5],
    ]);
    expect(dump.notes.unjudgedRows).toBe(2);
    expect(dump.notes.judgmentsWithoutRun).toBe(2);
    expect(dump.notes.judgedQueriesWithoutRun).toBe(1);
    expect(dump.notes.messages).toContain('ranked by score; the rank column is ignored');
    expect(dump.notes.judgments?.unretrieved).toBe(1);
  });

  it('rejects a judgments file that matches no query of the run', async () => {
    const runFile = tmp.file('b.run', 'q1 Q0 a 1 0.5 t\n');
    const judged = tmp.file('b.judgments', 'q2 0 a 1\n');
    const err = await rejection(readDump(runFile, { judgments: judged }));
    expect(err.file).toBe(judged);
    expect(err.message).toMatch(/none of its 1 queries appear in the run/);
  });

  it('rejects wrong field counts and non-numeric grades with the line', async () => {
    const runFile = tmp.file('c.run', 'q1 Q0 a 1 0.5 t\nq1 Q0 b 2\n');
    const judged = tmp.file('c.judgments', 'q1 0 a 1\n');
    expect((await rejection(readDump(runFile, { judgments: judged }))).line).toBe(2);
    const badGrade = tmp.file('d.judgments', 'q1 0 a 1\nq1 0 b relevant\n');
    const err = await rejection(readDump(tmp.file('d.run', 'q1 Q0 a 1 0.5 t\n'), { judgments: badGrade }));
    expect(err.message).toBe(`${badGrade}:2: expected a number for the grade (4th field) (found "relevant")`);
  });
});

describe('sparse feature lines with a scores file', () => {
  it('takes the label, the qid and the docid comment; scores come from the side file', async () => {
    const svm = tmp.file('test.svm', [
      '2 qid:7 1:0.5 2:1.25 #docid = sku-70 extra',
      '0 qid:7 1:0.1 2:0.0 # docid = sku-71',
      '1 qid:8 1:0.9 2:0.3',
      '0 qid:8 1:0.2 2:0.3',
    ].join('\n') + '\n');
    const scores = tmp.file('test.scores', '0.4\n-1.5\n2\n\n3\n');
    const dump = await readDump(svm, { scores });
    expect(dump.format).toBe('sparse');
    expect(simple(plainRows(dump))).toEqual([['7', 'sku-70', 2, 0.4], ['7', 'sku-71', 0, -1.5], ['8', '1', 1, 2], ['8', '2', 0, 3]]);
    expect(Array.from(dump.line)).toEqual([1, 2, 3, 4]);
  });

  it('rejects a scores file with a different number of lines', async () => {
    const svm = tmp.file('short.svm', '1 qid:1 1:0.5\n0 qid:1 1:0.2\n');
    const scores = tmp.file('short.scores', '0.5\n');
    const err = await rejection(readDump(svm, { scores }));
    expect(err.message).toMatch(/2 rows but the scores file has 1 scores/);
  });

  it('rejects a line without qid', async () => {
    const svm = tmp.file('noqid.svm', '1 qid:1 1:0.5\n0 1:0.2\n');
    const err = await rejection(readDump(svm, { scores: tmp.file('noqid.scores', '1\n2\n'), format: 'sparse' }));
    expect(err.line).toBe(2);
  });
});

describe('Parquet', () => {
  const columns = (offset: number) => [
    { name: 'query_id', data: ['tile cutter', 'tile cutter', 'grout float'].map((q) => q), type: 'STRING' as const },
    { name: 'product_id', data: [`sku-${offset}`, `sku-${offset + 1}`, `sku-${offset + 2}`], type: 'STRING' as const },
    { name: 'grade', data: [3, 0, 1], type: 'INT32' as const },
    { name: 'prediction', data: [0.9, 0.1, 0.5], type: 'DOUBLE' as const },
    { name: 'device', data: ['mobile', 'desktop', 'mobile'], type: 'STRING' as const },
  ];

  it('reads a single file (snappy and gzip pages) with roles and segments', async () => {
    for (const codec of ['SNAPPY', 'GZIP'] as const) {
      const buf = parquetWriteBuffer({ columnData: columns(0), codec, rowGroupSize: 2,
        compressors: { GZIP: (input: Uint8Array) => gzipSync(input) } });
      const path = tmp.file(`one-${codec}.parquet`, new Uint8Array(buf));
      const dump = await readDump(path);
      expect(dump.format).toBe('parquet');
      expect(simple(plainRows(dump))).toEqual([['tile cutter', 'sku-0', 3, 0.9], ['tile cutter', 'sku-1', 0, 0.1], ['grout float', 'sku-2', 1, 0.5]]);
      expect(plainRows(dump).map((r) => [r.line, r.offset, r.segments['device']])).toEqual([[0, -1, 'mobile'], [0, -1, 'desktop'], [0, -1, 'mobile']]);
    }
  });

  it('reads a folder of part files in name order', async () => {
    const dir = join(tmp.path, 'parts');
    mkdirSync(dir);
    writeFileSync(join(dir, 'part-1.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: columns(10) })));
    writeFileSync(join(dir, 'part-0.parquet'), new Uint8Array(parquetWriteBuffer({ columnData: columns(0) })));
    writeFileSync(join(dir, 'README.txt'), 'not a part');
    const dump = await readDump(dir);
    expect(dump.rowCount).toBe(6);
    expect(plainRows(dump).map((r) => r.item)).toEqual(['sku-0', 'sku-1', 'sku-2', 'sku-10', 'sku-11', 'sku-12']);
    expect(dump.queries.size).toBe(2);
  });

  it('interns text as UTF-8 bytes: non-ASCII names, numeric item ids, a missing segment value', async () => {
    const buf = parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: ['tür scharnier', 'tür scharnier', 'größe 3', 'tür scharnier'], type: 'STRING' },
      { name: 'item_id', data: [70n, 71n, 70n, 70n], type: 'INT64' },
      { name: 'label', data: [2, 0, 1, 1], type: 'INT32' },
      { name: 'score', data: [0.5, 0.25, 0.75, 0.1], type: 'DOUBLE' },
      { name: 'locale', data: ['de-DE', null, 'de-AT', 'de-DE'], type: 'STRING' },
    ], rowGroupSize: 3 });
    const dump = await readDump(tmp.file('utf8.parquet', new Uint8Array(buf)));
    expect(simple(plainRows(dump))).toEqual([
      ['tür scharnier', '70', 2, 0.5], ['tür scharnier', '71', 0, 0.25], ['größe 3', '70', 1, 0.75], ['tür scharnier', '70', 1, 0.1],
    ]);
    // The same query and item get the same ids across row groups; a null segment value is the empty string.
    expect(Array.from(dump.query)).toEqual([0, 0, 1, 0]);
    expect(Array.from(dump.item)).toEqual([0, 1, 0, 0]);
    expect(plainRows(dump).map((r) => r.segments['locale'])).toEqual(['de-DE', '', 'de-AT', 'de-DE']);
  });

  it('reads numbers written as text as the CSV reader does, and keeps segment bytes that are not UTF-8 apart (escaped)', async () => {
    const grades = ['2', ' 0', '', '3.0', 'NaN', '1'];
    const scores = ['0.5', '1e-3', '-0', ' 7 ', 'inf', '0.1'];
    const buf = parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: ['drill', 'drill', 'drill', 'drill', 'saw', 'saw'], type: 'STRING' },
      { name: 'item_id', data: ['a', 'b', 'c', 'd', 'a', 'e'], type: 'STRING' },
      { name: 'label', data: grades, type: 'STRING' },
      { name: 'score', data: scores, type: 'STRING' },
      { name: 'store', data: [[0x71, 0xe9], [0x71, 0xe8], [0x71, 0xe9], [0x71], [0x71, 0xe8], [0x71]].map((b) => Uint8Array.from(b)), type: 'BYTE_ARRAY' },
    ], rowGroupSize: 4 });
    const dump = await readDump(tmp.file('text-numbers.parquet', new Uint8Array(buf)));
    const csv = ['query_id,item_id,label,score', ...grades.map((g, i) => `${i < 4 ? 'drill' : 'saw'},${'abcdae'[i]},${g},${scores[i]}`)].join('\n');
    const reference = await readDump(tmp.file('text-numbers.csv', csv + '\n'));
    expect(Array.from(dump.label)).toEqual(Array.from(reference.label));
    expect(Array.from(dump.score)).toEqual(Array.from(reference.score));
    expect(Array.from(dump.query)).toEqual([0, 0, 0, 0, 1, 1]);
    // Two byte sequences a decoder would both turn into U+FFFD stay two values.
    expect(plainRows(dump).map((r) => r.segments['store'])).toEqual(['q<E9>', 'q<E8>', 'q<E9>', 'q', 'q<E8>', 'q']);
  });

  it('reports missing roles by column name', async () => {
    const buf = parquetWriteBuffer({ columnData: columns(0).filter((c) => c.name !== 'grade') });
    const err = await rejection(readDump(tmp.file('nolabel.parquet', new Uint8Array(buf))));
    expect(err.message).toMatch(/naming the label column/);
  });
});

describe('format detection', () => {
  it('content wins over a misleading extension; format overrides both', async () => {
    const jsonl = tmp.file('looks.csv', '{"qid": "q", "item_id": "a", "label": 1, "score": 2}\n');
    expect((await readDump(jsonl)).format).toBe('jsonl');
    const csvInTxt = tmp.file('dump.txt', 'qid;item_id\n');
    await rejection(readDump(csvInTxt));
    const semicolon = tmp.file('forced.dat', 'qid\titem_id\tlabel\tscore\nq\ta\t1\t2\n');
    expect((await readDump(semicolon, { format: 'tsv' })).format).toBe('tsv');
    const run = tmp.file('norun.txt', 'q1 Q0 a 1 0.5 t\n');
    expect((await rejection(readDump(run))).message).toMatch(/judgments file/);
  });

  it('detects a gzip-compressed run file from its content', async () => {
    const runGz = tmp.file('run.gz', gzipSync(Buffer.from('q1 Q0 a 1 0.5 t\nq1 Q0 b 2 0.25 t\n')));
    const judged = tmp.file('run.judgments', 'q1 0 b 2\n');
    const dump = await readDump(runGz, { judgments: judged });
    expect(simple(plainRows(dump))).toEqual([['q1', 'a', NaN, 0.5], ['q1', 'b', 2, 0.25]]);
  });
});
