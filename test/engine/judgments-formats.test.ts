/**
 * Labels taken from a judgments file give exactly the numbers of the same data with labels inline, for
 * every dump format and every judgments layout: a seeded collection written once as a labelled CSV (the
 * reference) and again as each format without labels plus a judgments file. Every per-query value and
 * every mean must be bit-identical. Every judged item is retrieved here (inline labels cannot express the
 * others), and a few rows are unjudged (an empty label inline, no judgment line in the file).
 */
import { parquetWriteBuffer } from 'hyparquet-writer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import type { Evaluation } from '../../extension/engine/evaluate/types';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { readDump, type ReadOptions } from '../../extension/engine/readers';
import { streamOrRead } from '../../extension/engine/index';
import { seededRandom } from '../reference/random';
import { TempDir } from './fixtures/readers/tempFiles';

const tmp = new TempDir();
afterAll(() => tmp.remove());

interface Row { query: string; item: string; grade: number; score: number }

/** 80 queries of 1–25 items, grades 0–3, a twentieth unjudged, scores on a coarse grid (many ties). */
function collection(seed: number): Row[] {
  const rand = seededRandom(seed);
  const rows: Row[] = [];
  for (let q = 0; q < 80; q++) {
    const n = 1 + Math.floor(rand() * 25);
    for (let i = 0; i < n; i++) {
      rows.push({ query: `q${q}`, item: `sku-${q}-${i}`, grade: rand() < 0.05 ? NaN : Math.floor(rand() * 4), score: Math.round(rand() * 24) / 8 });
    }
  }
  return rows;
}

const METRICS = parseMetricList('ndcg@10,ndcg,dcg@5,err@10,ap,rr,p@5,r@10,rbp,tau');
const judgedRows = (rows: Row[]) => rows.filter((r) => !Number.isNaN(r.grade));
const gradeText = (g: number) => (Number.isNaN(g) ? '' : String(g));

function dumpFiles(rows: Row[]): Record<string, { path: string; options?: ReadOptions }> {
  const csv = (sep: string, labels: boolean) =>
    [['query', 'item', ...(labels ? ['grade'] : []), 'score'].join(sep),
      ...rows.map((r) => [r.query, r.item, ...(labels ? [gradeText(r.grade)] : []), r.score].join(sep))].join('\n') + '\n';
  const parquet = parquetWriteBuffer({ columnData: [
    { name: 'query_id', data: rows.map((r) => r.query), type: 'STRING' },
    { name: 'item_id', data: rows.map((r) => r.item), type: 'STRING' },
    { name: 'score', data: rows.map((r) => r.score), type: 'DOUBLE' },
  ] });
  const scores = tmp.file('dump.sparse.scores', rows.map((r) => r.score).join('\n') + '\n');
  return {
    csv: { path: tmp.file('dump.csv', csv(',', false)) },
    tsv: { path: tmp.file('dump.tsv', csv('\t', false)) },
    jsonl: { path: tmp.file('dump.jsonl', rows.map((r) => JSON.stringify({ query: r.query, item: r.item, score: r.score })).join('\n') + '\n') },
    parquet: { path: tmp.file('dump.parquet', new Uint8Array(parquet)) },
    run: { path: tmp.file('dump.run', rows.map((r, i) => `${r.query} Q0 ${r.item} ${i + 1} ${r.score} seeded`).join('\n') + '\n') },
    // Sparse feature lines always carry a grade; here a wrong one (9) that the judgments must replace.
    sparse: { path: tmp.file('dump.sparse', rows.map((r) => `9 qid:${r.query} 1:0.5 2:${r.score} # docid = ${r.item}`).join('\n') + '\n'), options: { scores } },
  };
}

function judgmentFiles(rows: Row[]): Record<string, string> {
  const judged = judgedRows(rows);
  const table = (sep: string) => ['query_id,product_id,relevance'.split(',').join(sep), ...judged.map((r) => [r.query, r.item, r.grade].join(sep))].join('\n') + '\n';
  const parquet = parquetWriteBuffer({ columnData: [
    { name: 'qid', data: judged.map((r) => r.query), type: 'STRING' },
    { name: 'doc_id', data: judged.map((r) => r.item), type: 'STRING' },
    { name: 'rating', data: judged.map((r) => r.grade), type: 'INT32' },
  ] });
  return {
    lines: tmp.file('grades.qrels', judged.map((r) => `${r.query} 0 ${r.item} ${r.grade}`).join('\n') + '\n'),
    csv: tmp.file('grades.csv', table(',')),
    tsv: tmp.file('grades.tsv', table('\t')),
    jsonl: tmp.file('grades.jsonl', judged.map((r) => JSON.stringify({ query: r.query, item: r.item, grade: r.grade })).join('\n') + '\n'),
    parquet: tmp.file('grades.parquet', new Uint8Array(parquet)),
  };
}

/** Bytes of a typed array: equal bytes means equal bits. */
const bits = (a: ArrayBufferView) => Array.from(new Uint8Array(a.buffer, a.byteOffset, a.byteLength));

function expectSameNumbers(got: Evaluation, want: Evaluation): void {
  expect(got.queryCount).toBe(want.queryCount);
  want.perQuery.values.forEach((v, m) => expect(bits(got.perQuery.values[m]!), METRICS[m]!.key).toEqual(bits(v)));
  for (const key of ['items', 'relevant', 'inversions', 'inversionCost', 'skipped'] as const) {
    expect(bits(got.perQuery[key]), key).toEqual(bits(want.perQuery[key]));
  }
  expect(got.summary).toEqual(want.summary);
  expect(got.sensitivity).toEqual(want.sensitivity);
  expect(got.degenerate).toEqual(want.degenerate);
}

describe('labels from a judgments file against the same labels inline', () => {
  const rows = collection(20261203);
  let reference: Evaluation;
  let dumps: ReturnType<typeof dumpFiles>;
  let judgments: ReturnType<typeof judgmentFiles>;
  beforeAll(async () => {
    const csv = ['query,item,grade,score', ...rows.map((r) => [r.query, r.item, gradeText(r.grade), r.score].join(','))].join('\n') + '\n';
    reference = evaluate(await readDump(tmp.file('inline.csv', csv)), METRICS, DEFAULT_CONVENTIONS);
    dumps = dumpFiles(rows);
    judgments = judgmentFiles(rows);
    expect(reference.degenerate.unjudgedRows).toBeGreaterThan(10);
  });

  it.each(['csv', 'tsv', 'jsonl', 'parquet', 'run', 'sparse'])('%s dump with judgment lines', async (format) => {
    const { path, options } = dumps[format]!;
    const dump = await readDump(path, { ...options, judgments: judgments.lines });
    expect(dump.notes.judgments?.unretrieved).toBe(0);
    expectSameNumbers(evaluate(dump, METRICS, DEFAULT_CONVENTIONS), reference);
  });

  it.each(['csv', 'tsv', 'jsonl', 'parquet'])('csv dump with a %s judgments table', async (layout) => {
    const dump = await readDump(dumps.csv!.path, { judgments: judgments[layout]! });
    expectSameNumbers(evaluate(dump, METRICS, DEFAULT_CONVENTIONS), reference);
  });

  it.each(['lines', 'csv', 'tsv', 'jsonl', 'parquet'])('csv and tsv dumps streamed with a %s judgments file, joined block by block', async (layout) => {
    for (const format of ['csv', 'tsv']) {
      const outcome = await streamOrRead(dumps[format]!.path, { judgments: judgments[layout]! }, METRICS, DEFAULT_CONVENTIONS, { reading: 'stream', blockBytes: 400 });
      expect(outcome.kind).toBe('streamed');
      if (outcome.kind === 'streamed') expectSameNumbers(outcome.evaluation, reference);
    }
  });

  it('the sparse file\'s own grades lose to the judgments, and every disagreement is counted', async () => {
    const dump = await readDump(dumps.sparse!.path, { scores: dumps.sparse!.options!.scores, judgments: judgments.lines });
    expect(dump.notes.judgments?.inlineLabelRows).toBe(rows.length);
    expect(dump.notes.judgments?.disagreements).toBe(rows.length);
    expect(dump.notes.judgments?.disagreementExamples[0]).toMatch(/^q0\/sku-0-0: 9 in the dump, /);
  });

  it('inline labels equal to the judgments: judgments win with no disagreement, same numbers', async () => {
    const dump = await readDump(tmp.file('inline-too.csv', ['query,item,grade,score', ...rows.map((r) => [r.query, r.item, gradeText(r.grade), r.score].join(','))].join('\n') + '\n'),
      { judgments: judgments.tsv! });
    expect(dump.notes.judgments).toMatchObject({ inlineLabelRows: judgedRows(rows).length, disagreements: 0 });
    expectSameNumbers(evaluate(dump, METRICS, DEFAULT_CONVENTIONS), reference);
  });

  it('a tabular judgments file with a pair given twice names the file and line', async () => {
    const twice = tmp.file('twice.csv', 'query,item,grade\nq0,sku-0-0,1\nq0,sku-0-1,2\nq0,sku-0-0,3\n');
    await expect(readDump(dumps.csv!.path, { judgments: twice })).rejects.toThrow(`${twice}:4: expected each (query, item) pair judged once`);
  });
});
