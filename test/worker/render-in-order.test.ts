/**
 * The JSON report's records rendered after scoring by this thread and score threads at once
 * (threads/renderInOrder.ts) must be the very bytes formatJson renders on one thread, in query order,
 * whichever thread made each chunk. The score worker is bundled fresh from source, as the build does.
 */
import { describe, expect, it } from 'vitest';
import { engineActivity } from '../../extension/engine/config';
import { CancelledError } from '../../extension/engine/errors';
import { registerChunkRenderer, type ChunkWork } from '../../extension/engine/evaluate/chunkOutput';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import type { Evaluation } from '../../extension/engine/evaluate/types';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { BytePool } from '../../extension/engine/model/bytePool';
import { MapStringPool, type StringPool } from '../../extension/engine/model/stringPool';
import { writeReport } from '../../extension/engine/report/index';
import { csvRowsWork, formatCsv } from '../../extension/engine/report/csv';
import { formatJson, jsonFrame } from '../../extension/engine/report/json';
import { queryRecordsWork } from '../../extension/engine/report/jsonRecords';
import type { ReportInput } from '../../extension/engine/report/reportInput';
import { evaluateInParallel } from '../../extension/engine/threads/parallelEvaluate';
import { renderInOrder } from '../../extension/engine/threads/renderInOrder';
import type { RankedDump } from '../../extension/engine/model/dump';
import { buildDump, type TestRow } from '../engine/dumpBuilder';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { judgedCollection, joined } from '../engine/judgedSets';
import { QUERY_NAMES, seededRandom } from '../reference/random';
import { useBundledWorkers } from './support/workers';

const tmp = new TempDir();
useBundledWorkers(tmp, ['scoreWorker']);

const METRICS = parseMetricList('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau,dcg@3');

/** Queries of 0–6 items, some with nothing relevant, some values NaN; names with quotes and non-ASCII now and then. */
function randomRows(seed: number, queries: number): TestRow[] {
  const rand = seededRandom(seed);
  const rows: TestRow[] = [];
  for (let q = 0; q < queries; q++) {
    const base = QUERY_NAMES[q % QUERY_NAMES.length]!;
    const query = q % 97 === 0 ? `${base} "10 mm" ${q}` : q % 89 === 0 ? `${base} Ø${q}` : `${base} ${q}`;
    const n = Math.floor(rand() * 7);
    for (let i = 0; i < n; i++) rows.push({ query, item: `sku-${q}-${i}`, label: rand() < 0.03 ? NaN : Math.floor(rand() * 4), score: Math.round(rand() * 40) / 8 });
  }
  return rows;
}

/** The dump's query names as a reader keeps them: UTF-8 in a byte pool, which packs into shared memory. */
function bytePoolOf(names: StringPool): BytePool {
  const pool = new BytePool();
  for (let q = 0; q < names.size; q++) expect(pool.internString(names.get(q))).toBe(q);
  return pool;
}

function inputOf(dump: RankedDump, evaluation: Evaluation, queryNames: StringPool = dump.queries): ReportInput {
  return { evaluation, queryNames, source: 'runs/checkpoint-7.tsv', rowCount: dump.rowCount };
}

/** renderInOrder's chunks as one text, with the chunk numbers in the order they came. */
async function rendered(work: ChunkWork, evaluation: Evaluation, options: Parameters<typeof renderInOrder>[4]): Promise<{ text: string; order: number[] }> {
  const order: number[] = [];
  const parts: Uint8Array[] = [];
  await renderInOrder(work, evaluation.perQuery, evaluation.queryCount, (utf8, chunk) => {
    order.push(chunk);
    if (chunk > 0) parts.push(Buffer.from(',\n'));
    parts.push(utf8);
  }, options);
  return { text: Buffer.concat(parts).toString(), order };
}

/** The records of formatJson's document, as text between its frame's halves. */
function recordsOf(input: ReportInput): string {
  const frame = jsonFrame(input);
  return formatJson(input).slice(frame.before.length, -frame.after.length);
}

describe('rendering the records after scoring', () => {
  const dump = buildDump(randomRows(5, 9000));
  const names = bytePoolOf(dump.queries);
  const chunksOf = (size: number) => Math.ceil(dump.queries.size / size);

  it('on three threads, small chunks come back in query order, the same bytes as one thread renders', async () => {
    const one = evaluate(dump, METRICS, DEFAULT_CONVENTIONS);
    const many = await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 3 });
    const work = queryRecordsWork(METRICS, names, false);
    expect(work.shared).toBe(true);
    const before = engineActivity().chunksRenderedElsewhere;
    const { text, order } = await rendered(work, many, { threads: 3, chunkQueries: 250 });
    // The score threads made some of the chunks (the test fails if this thread made them all).
    expect(chunksOf(250)).toBeGreaterThan(25);
    expect(order).toEqual(Array.from({ length: chunksOf(250) }, (_, k) => k));
    expect(engineActivity().chunksRenderedElsewhere - before).toBeGreaterThan(0);
    expect(text).toBe(recordsOf(inputOf(dump, one)));
    expect(JSON.parse(`[${text}]`)).toHaveLength(dump.queries.size);
  });

  it('the CSV report\'s rows too: small chunks on three threads, the same bytes as formatCsv on one', async () => {
    const one = evaluate(dump, METRICS, DEFAULT_CONVENTIONS);
    const many = await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 3 });
    const { header, work } = csvRowsWork(inputOf(dump, many, names));
    expect(work.shared).toBe(true);
    const before = engineActivity().chunksRenderedElsewhere;
    const parts: Uint8Array[] = [];
    await renderInOrder(work, many.perQuery, many.queryCount, (utf8, chunk) => {
      if (chunk > 0) parts.push(Buffer.from('\n'));
      parts.push(utf8);
    }, { threads: 3, chunkQueries: 300 });
    expect(engineActivity().chunksRenderedElsewhere - before).toBeGreaterThan(0);
    expect(`${header}\n${Buffer.concat(parts).toString()}\n`).toBe(formatCsv(inputOf(dump, one)));
    // And writeReport's whole document, on two threads.
    const pieces: (string | Uint8Array)[] = [];
    await writeReport('csv', inputOf(dump, many, names), { worst: 10 }, (piece) => pieces.push(piece), 2);
    expect(Buffer.concat(pieces.map((p) => (typeof p === 'string' ? Buffer.from(p) : p))).toString()).toBe(formatCsv(inputOf(dump, one)));
  });

  it('writeReport writes the whole document as formatJson does, on several threads', async () => {
    const many = await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2 });
    const pieces: (string | Uint8Array)[] = [];
    await writeReport('json', inputOf(dump, many, names), { worst: 10 }, (piece) => pieces.push(piece), 2);
    const text = Buffer.concat(pieces.map((p) => (typeof p === 'string' ? Buffer.from(p) : p))).toString();
    expect(text).toBe(formatJson(inputOf(dump, evaluate(dump, METRICS, DEFAULT_CONVENTIONS))));
  });

  it.each(['skip', 'zero'] as const)('with judged items never retrieved (missing queries %s), the records count them the same way', async (policy) => {
    const { rows, judgments } = judgedCollection(41, 2500);
    const judged = joined(rows, judgments, policy);
    const one = evaluate(judged, METRICS, DEFAULT_CONVENTIONS);
    const many = await evaluateInParallel(judged, METRICS, DEFAULT_CONVENTIONS, { threads: 3 });
    const before = engineActivity().chunksRenderedElsewhere;
    const { text } = await rendered(queryRecordsWork(METRICS, bytePoolOf(judged.queries), true), many, { threads: 3, chunkQueries: 100 });
    expect(engineActivity().chunksRenderedElsewhere - before).toBeGreaterThan(0);
    expect(text).toBe(recordsOf(inputOf(judged, one)));
    expect(text).toContain('"notRetrieved": ');
  });

  it('columns in private memory (a scoring on one thread) are rendered on this thread alone', async () => {
    const one = evaluate(dump, METRICS, DEFAULT_CONVENTIONS);
    const before = engineActivity().chunksRenderedElsewhere;
    const { text, order } = await rendered(queryRecordsWork(METRICS, names, false), one, { threads: 3, chunkQueries: 1000 });
    expect(order).toHaveLength(chunksOf(1000));
    expect(engineActivity().chunksRenderedElsewhere).toBe(before);
    expect(text).toBe(recordsOf(inputOf(dump, one)));
  });

  it('names held as strings (not shared) are rendered on this thread alone', async () => {
    const many = await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2 });
    expect(dump.queries).toBeInstanceOf(MapStringPool);
    const work = queryRecordsWork(METRICS, dump.queries, false);
    expect(work.shared).toBe(false);
    const before = engineActivity().chunksRenderedElsewhere;
    const { text } = await rendered(work, many, { threads: 3, chunkQueries: 1000 });
    expect(engineActivity().chunksRenderedElsewhere).toBe(before);
    expect(text).toBe(recordsOf(inputOf(dump, many)));
  });

  it('a renderer the score threads do not have fails the whole rendering, naming it', async () => {
    registerChunkRenderer('only-on-this-thread', () => 'x');
    const many = await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2 });
    const written: number[] = [];
    const work: ChunkWork = { renderer: 'only-on-this-thread', params: null, shared: true };
    await expect(renderInOrder(work, many.perQuery, many.queryCount, (_bytes, chunk) => written.push(chunk), { threads: 2, chunkQueries: 100 }))
      .rejects.toThrow(/no chunk renderer 'only-on-this-thread'/);
    // Whatever this thread made before the failure came back was written in order, and not every chunk was.
    expect(written).toEqual(written.map((_, k) => k));
    expect(written.length).toBeLessThan(90);
  });

  it('an aborted signal stops the rendering with CancelledError', async () => {
    const many = await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2 });
    const controller = new AbortController();
    const written: number[] = [];
    const rendering = renderInOrder(queryRecordsWork(METRICS, names, false), many.perQuery, many.queryCount, (_bytes, chunk) => {
      written.push(chunk);
      if (chunk === 2) controller.abort();
    }, { threads: 2, chunkQueries: 100, signal: controller.signal });
    await expect(rendering).rejects.toBeInstanceOf(CancelledError);
    expect(written).toEqual([0, 1, 2]);
  });
});
