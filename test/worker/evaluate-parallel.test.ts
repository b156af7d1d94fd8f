/**
 * Scoring on several threads must give bit for bit what evaluate() gives on one: every per-query
 * column, every mean, the sensitivity rows, the degenerate counts and the warnings. The score worker
 * is bundled fresh from source into a temp folder, as the build does into dist/.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CancelledError, InputError } from '../../extension/engine/errors';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { configureEngine, engineActivity, type EngineSettings } from '../../extension/engine/config';
import { evaluateInParallel, splitByRows } from '../../extension/engine/threads/parallelEvaluate';
import type { Evaluation } from '../../extension/engine/evaluate/types';
import type { Conventions } from '../../extension/engine/metrics/conventions';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { buildDump, type TestRow } from '../engine/dumpBuilder';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { QUERY_NAMES, seededRandom } from '../reference/random';
import { useBundledWorkers } from './support/workers';
import { judgedCollection, joined } from '../engine/judgedSets';

const tmp = new TempDir();

useBundledWorkers(tmp, ['scoreWorker']);
let savedSettings: EngineSettings | undefined;
beforeAll(() => {
  // Every worker claims a chunk before this thread starts, so the comparison cannot pass on this thread alone.
  savedSettings = configureEngine({ tuning: { workersFirst: true } });
});
afterAll(() => {
  if (savedSettings) configureEngine(savedSettings);
});

/** Queries of 0–40 items with ties, duplicates, missing scores, unjudged rows and queries with nothing relevant. */
function randomRows(seed: number, queries: number): TestRow[] {
  const rand = seededRandom(seed);
  const rows: TestRow[] = [];
  for (let q = 0; q < queries; q++) {
    const query = `${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}`;
    const n = rand() < 0.05 ? 1 : Math.floor(rand() * 40);
    const noneRelevant = rand() < 0.1;
    for (let i = 0; i < n; i++) {
      const item = rand() < 0.04 ? `sku-${q}-0` : `sku-${q}-${i}`;
      const label = rand() < 0.03 ? NaN : noneRelevant ? 0 : Math.floor(rand() * 4);
      const score = rand() < 0.03 ? NaN : Math.round(rand() * 20) / 4;
      rows.push({ query, item, label, score });
    }
  }
  return rows;
}

/** Bytes of a typed array: equal bytes means equal bits, NaN payloads and signed zeros included. */
function bytesOf(a: ArrayBufferView): number[] {
  return Array.from(new Uint8Array(a.buffer, a.byteOffset, a.byteLength));
}

function expectIdentical(one: Evaluation, many: Evaluation): void {
  expect(many.queryCount).toBe(one.queryCount);
  const p1 = one.perQuery;
  const p2 = many.perQuery;
  for (const key of ['items', 'relevant', 'inversions', 'inversionCost', 'skipped'] as const) {
    expect(bytesOf(p2[key]), key).toEqual(bytesOf(p1[key]));
  }
  expect(p2.rbpResidual === undefined).toBe(p1.rbpResidual === undefined);
  if (p1.rbpResidual) expect(bytesOf(p2.rbpResidual!)).toEqual(bytesOf(p1.rbpResidual));
  expect(p2.values.length).toBe(p1.values.length);
  p1.values.forEach((v, m) => expect(bytesOf(p2.values[m]!), `metric ${m}`).toEqual(bytesOf(v)));
  // toEqual compares numbers with Object.is, so every mean must match to the last bit.
  expect(many.summary).toEqual(one.summary);
  expect(many.sensitivity).toEqual(one.sensitivity);
  expect(many.degenerate).toEqual(one.degenerate);
  expect(many.warnings).toEqual(one.warnings);
}

const METRICS = parseMetricList('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau,dcg@3');

describe('parallel scoring', () => {
  const cases: [number, number, Partial<Conventions>][] = [
    [1, 2, {}],
    [2, 3, { ties: 'pessimistic', noRelevant: 'zero' }],
    [3, 2, { gain: { kind: 'linear' }, ties: 'file-order', noRelevant: 'one', relevantFrom: 2 }],
    [4, 4, { gain: { kind: 'map', gains: new Map([[0, 0], [1, 3], [2, 1], [3, 6]]) }, ties: 'optimistic' }],
    // Grade 0 counts as relevant: a query of grade-0 items is not a no-relevant query, yet its ideal DCG is 0,
    // so the convention rows leave it out of their means (each thread must record that it did).
    [5, 2, { relevantFrom: 0 }],
  ];
  it.each(cases)('seed %i with %i threads matches one thread', async (seed, threads, change) => {
    const dump = buildDump(randomRows(seed, 3000));
    const conventions: Conventions = { ...DEFAULT_CONVENTIONS, ...change };
    const one = evaluate(dump, METRICS, conventions);
    const many = await evaluateInParallel(dump, METRICS, conventions, { threads });
    expectIdentical(one, many);
    expect(one.sensitivity.length).toBeGreaterThan(5);
  });

  it.each(['skip', 'zero'] as const)('with judged items never retrieved and missing queries %s, it matches', async (policy) => {
    const { rows, judgments } = judgedCollection(41, 2500);
    const dump = joined(rows, judgments, policy);
    expect(dump.notes.judgments!.unretrieved).toBeGreaterThan(1000);
    expect(dump.notes.judgments!.absentQueries).toBeGreaterThan(50);
    const one = evaluate(dump, METRICS, DEFAULT_CONVENTIONS);
    const many = await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 3 });
    expectIdentical(one, many);
    expect(bytesOf(many.perQuery.unretrieved!)).toEqual(bytesOf(one.perQuery.unretrieved!));
  });

  it.each([1, 3, 200])('with %i chunks per thread it still matches', async (chunksPerThread) => {
    const dump = buildDump(randomRows(20 + chunksPerThread, 1500));
    const one = evaluate(dump, METRICS, DEFAULT_CONVENTIONS);
    const saved = configureEngine({ tuning: { scoreChunksPerThread: chunksPerThread } });
    try {
      expectIdentical(one, await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2 }));
    } finally {
      configureEngine(saved);
    }
  });

  it('without sensitivity rows, and without workers available, still matches', async () => {
    const dump = buildDump(randomRows(9, 500));
    const one = evaluate(dump, METRICS, DEFAULT_CONVENTIONS, { sensitivity: false });
    expectIdentical(one, await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2, sensitivity: false }));
    const saved = configureEngine({ bundleDir: join(tmp.path, 'missing') });
    try {
      expectIdentical(one, await evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2, sensitivity: false }));
    } finally {
      configureEngine(saved);
    }
  });

  it('splits queries into ranges of shrinking rows', () => {
    // Rows per query: 10, 10, 10, 70 → two parts, the first ending near 3/4 of the rows (75): before the big query.
    const start = Uint32Array.from([0, 10, 20, 30, 100]);
    expect(splitByRows(start, 2)).toEqual([0, 3, 4]);
    expect(splitByRows(start, 1)).toEqual([0, 4]);
    // 100 queries of 10 rows in 4 parts: 7/16, 5/16, 3/16 and 1/16 of the rows.
    const even = Uint32Array.from({ length: 101 }, (_, q) => 10 * q);
    expect(splitByRows(even, 4)).toEqual([0, 44, 75, 94, 100]);
  });

  it('bad input found while preparing is reported, and the workers started before it are stopped', async () => {
    // A negative grade under exponential gain fails in preparation, after the score workers were started.
    const rows = randomRows(6, 300);
    rows[17] = { ...rows[17]!, label: -1 };
    const dump = buildDump(rows);
    await expect(evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 3 })).rejects.toBeInstanceOf(InputError);
    await expect.poll(() => engineActivity().liveThreads, { timeout: 5000 }).toBe(0);
    // Under linear gain (and without ERR, which needs grades >= 0) the same dump scores on three threads.
    const linear = { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' as const } };
    const metrics = parseMetricList('ndcg@10,ap,rbp,tau');
    expectIdentical(evaluate(dump, metrics, linear), await evaluateInParallel(dump, metrics, linear, { threads: 3 }));
  });

  it('a cancelled evaluation throws and stops its workers', async () => {
    const dump = buildDump(randomRows(5, 2000));
    const controller = new AbortController();
    controller.abort();
    await expect(evaluateInParallel(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2, signal: controller.signal })).rejects.toBeInstanceOf(CancelledError);
  });
});
