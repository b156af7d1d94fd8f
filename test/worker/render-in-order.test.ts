/**
 * The JSON report's records rendered after scoring by this thread and score threads at once
 * (threads/renderInOrder.ts) must be the very bytes formatJson renders on one thread, in query order,
 * whichever thread made each chunk. The score worker is bundled fresh from source, as the build does.
 */
import { describe, expect, it, vi } from 'vitest';
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
import { MAX_AHEAD, MAX_AHEAD_WHILE_STARTING, renderInOrder, renderWithThreads, type RenderRequests } from '../../extension/engine/threads/renderInOrder';
import { ThreadPool } from '../../extension/engine/threads/pool';
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
async function rendered(work: ChunkWork | (() => ChunkWork), evaluation: Evaluation, options: Parameters<typeof renderInOrder>[4]): Promise<{ text: string; order: number[] }> {
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

  it('work given as the function that makes it: the same bytes, threads or not, and its failure rejects', async () => {
    const many = await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2 });
    const expected = recordsOf(inputOf(dump, many));
    const before = engineActivity().chunksRenderedElsewhere;
    const shared = await rendered(() => queryRecordsWork(METRICS, names, false), many, { threads: 2, chunkQueries: 100 });
    expect(shared.text).toBe(expected);
    expect(engineActivity().chunksRenderedElsewhere - before).toBeGreaterThan(0);
    // Names held as strings: made after the threads were started, the work is still rendered here alone.
    const elsewhere = engineActivity().chunksRenderedElsewhere;
    const unshared = await rendered(() => queryRecordsWork(METRICS, dump.queries, false), many, { threads: 2, chunkQueries: 100 });
    expect(unshared.text).toBe(expected);
    expect(engineActivity().chunksRenderedElsewhere).toBe(elsewhere);
    // The threads start before the work is made (their start-up overlaps its making); when making it fails,
    // the threads started for it are stopped.
    const warm = vi.spyOn(ThreadPool.prototype, 'warm');
    const close = vi.spyOn(ThreadPool.prototype, 'close');
    try {
      let warmedBefore = -1;
      await rendered(() => {
        warmedBefore = warm.mock.calls.length;
        return queryRecordsWork(METRICS, names, false);
      }, many, { threads: 2, chunkQueries: 100 });
      expect(warmedBefore).toBe(1);
      const closedBefore = close.mock.calls.length;
      await expect(rendered(() => {
        throw new Error('no names to pack');
      }, many, { threads: 2, chunkQueries: 100 })).rejects.toThrow('no names to pack');
      expect(close.mock.calls.length - closedBefore).toBe(1);
    } finally {
      warm.mockRestore();
      close.mockRestore();
    }
  });

  it(`renders ${MAX_AHEAD_WHILE_STARTING} chunks ahead while no thread has answered, then ${MAX_AHEAD}`, async () => {
    // A pool whose thread answers only when the test says so: what this thread renders meanwhile is counted.
    const madeHere: number[] = [];
    registerChunkRenderer('counted', (_params: null, _perQuery, from: number) => {
      madeHere.push(from);
      return `<${from}>`;
    });
    const asked: { chunk: number; done: boolean; answer: () => void }[] = [];
    const pool: Pick<ThreadPool<RenderRequests>, 'request'> = {
      request: ((_method: 'renderChunk', params: RenderRequests['renderChunk']['params']) => new Promise<RenderRequests['renderChunk']['result']>((resolve) => {
        const request = { chunk: params.from, done: false, answer: () => {
          request.done = true;
          resolve({ utf8: Buffer.from(`[${params.from}]`) });
        } };
        asked.push(request);
      })) as ThreadPool<RenderRequests>['request'],
    };
    const written: string[] = [];
    const chunks = 30;
    const rendering = renderWithThreads({ renderer: 'counted', params: null, shared: true }, evaluate(dump, METRICS, DEFAULT_CONVENTIONS).perQuery,
      (k) => [k, k + 1], chunks, (utf8) => written.push(Buffer.from(utf8).toString()), pool, 1, undefined);
    const settle = async () => {
      for (let i = 0; i < 200; i++) await new Promise<void>((resolve) => setImmediate(resolve));
    };
    await settle();
    const pending = () => asked.filter((a) => !a.done).map((a) => a.chunk);
    const answer = (chunk: number) => asked.find((a) => a.chunk === chunk)!.answer();
    // Chunk 0 here, two asked of the starting thread, then as many ahead as allowed while it starts.
    expect(pending()).toEqual([1, 2]);
    expect(madeHere).toEqual([0, ...Array.from({ length: MAX_AHEAD_WHILE_STARTING }, (_, i) => 3 + i)]);
    answer(1);
    await settle();
    // It has answered: chunk 1 is written, and with more than MAX_AHEAD ready nothing more is made here.
    expect(written).toHaveLength(2);
    expect(pending()).toEqual([2, 11]);
    expect(madeHere).toHaveLength(1 + MAX_AHEAD_WHILE_STARTING);
    answer(2);
    await settle();
    // Chunks 2-10 written; the thread holds 11 and 12; this thread made MAX_AHEAD more.
    expect(written).toHaveLength(11);
    expect(pending()).toEqual([11, 12]);
    expect(madeHere.slice(1 + MAX_AHEAD_WHILE_STARTING)).toEqual(Array.from({ length: MAX_AHEAD }, (_, i) => 13 + i));
    for (let i = 0; pending().length > 0 && i < chunks; i++) {
      for (const chunk of pending()) answer(chunk);
      await settle();
    }
    await rendering;
    expect(written).toHaveLength(chunks);
    expect(written.map((text) => Number(/\d+/.exec(text)![0]))).toEqual(Array.from({ length: chunks }, (_, k) => k));
  });
});
