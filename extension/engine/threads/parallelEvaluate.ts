/**
 * Scores a large dump on several threads: the queries are cut into contiguous chunks of about equal
 * rows, and this thread and the score workers each claim the next unclaimed chunk until none is left
 * (so a thread slowed by a busy machine or a late start simply takes fewer), all writing into
 * per-query columns in shared memory. Means are then taken over the merged columns in query order,
 * and the sensitivity means over recorded per-query values, so the result is bit-identical to
 * evaluate() on one thread (partial sums added together would round differently).
 */
import { loadavg } from 'node:os';
import { engineSettings } from '../config';
import type { RankedDump } from '../model/dump';
import { groupByQuery, sharedColumn, type QueryGroups } from '../model/groups';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import {
  addTally,
  allocatePerQuery,
  evaluate,
  finishEvaluation,
  newSensitivityPass,
  sensitivityColumns,
  emptyTally,
  prepareEvaluation,
  RangeScorer,
  type EvaluateOptions,
  type EvaluationSetup,
  type RangeTally,
  type ScoredColumns,
} from '../evaluate/evaluate';
import { sharedColumnMemory, type ColumnMemory } from '../evaluate/columnMemory';
import type { SensitivityColumns } from '../evaluate/sensitivity';
import type { Evaluation, PerQueryColumns } from '../evaluate/types';
import { freeCores } from '../evaluate/coreMeter';
import { idleKeptThreads, leasePool } from './keptPools';
import { shrinkingEnds } from './shrinkingShares';
import type { ThreadPool } from './pool';

/**
 * Below this many rows starting a worker costs more than it saves: on 1M rows (0.4 s of scoring on one
 * thread) a second thread, starting cold, made scoring slower on the 2-core machine we measured on.
 */
const PARALLEL_FROM_ROWS = 2_000_000;
/**
 * From this many rows when a kept score thread is idle (keptPools.ts: started and compiled already). Best
 * of 5 warm scorings (default metrics, 25 rows per query) on 2 cores, one thread against two: 100k rows
 * 22 ms and 16 ms; 250k 51 and 27 ms; 500k 95–99 and 50–52 ms; 1M 181–200 and 105–114 ms.
 */
const KEPT_PARALLEL_FROM_ROWS = 100_000;
const MAX_THREADS = 4;
/**
 * What a query costs to score beyond its rows, in rows: the thresholds above count rows of long queries, but
 * a dump of short queries costs more per row. One thread, default metrics, on 2 cores: 1M one-row queries
 * 1.25 s; 10M rows in 1M ten-row queries 2.9 s; so about 0.18 µs a row and 1.07 µs a query.
 */
const QUERY_COST_IN_ROWS = 6;

/** The scoring work of a dump, in rows of a long query (what the thresholds above count). */
export function scoringWork(rows: number, queries: number): number {
  return rows + QUERY_COST_IN_ROWS * queries;
}

export interface ParallelEvaluateOptions extends EvaluateOptions {
  /** Scoring threads including this one; default: 1 below PARALLEL_FROM_ROWS rows of work (scoringWork), else the free cores (at most 4). */
  threads?: number;
  /**
   * Cores other programs are keeping busy (a CoreMeter started before the read measures it best);
   * default: the 1-minute load average.
   */
  otherBusyCores?: number;
}

/** A score worker's job. Typed arrays on SharedArrayBuffers are shared, not copied. */
export interface ScoreRangeTask {
  readonly setup: EvaluationSetup;
  readonly columns: ScoredColumns;
  /** Query chunk starts; the last entry is the query count. */
  readonly bounds: readonly number[];
  /** next[0]: the next chunk to claim (Atomics.add). */
  readonly next: Int32Array;
  readonly perQuery: PerQueryColumns;
  readonly sensitivity?: SensitivityColumns;
}

/** What a scoring thread hands back: its counts. */
export interface ScoreRangeResult {
  readonly tally: RangeTally;
}

/**
 * Explicit threads win. Otherwise only the cores other programs leave free are used: a second scoring
 * thread costs a fifth more CPU in all (a cold start, the merge), so on a core that is busy anyway it
 * made eval slower in our measurements rather than faster.
 */
export function scoringThreads(work: number, threads: number | undefined, otherBusyCores: number = loadavg()[0]!,
  keptIdle: number = idleKeptThreads('scoreWorker')): number {
  if (threads !== undefined) return Math.max(1, Math.min(16, Math.floor(threads)));
  const free = Math.max(1, Math.min(MAX_THREADS, freeCores(otherBusyCores)));
  if (keptIdle > 0 && work >= KEPT_PARALLEL_FROM_ROWS) return Math.min(free, keptIdle + 1);
  return work < PARALLEL_FROM_ROWS ? 1 : free;
}

export async function evaluateInParallel(dump: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions,
  options: ParallelEvaluateOptions = {}): Promise<Evaluation> {
  const threads = Math.min(scoringThreads(scoringWork(dump.rowCount, dump.queries.size), options.threads, options.otherBusyCores), dump.queries.size);
  const lease = threads <= 1 ? undefined : leasePool<ScoreRequests>('scoreWorker', threads - 1);
  if (lease === undefined) return evaluate(dump, metrics, conventions, options);
  // Started first: a thread takes about 0.1 s to start, time this thread spends grouping and preparing.
  lease.pool.warm(lease.workers);
  try {
    return await scoreWithWorkers(dump, metrics, conventions, options, lease.workers + 1, lease.pool);
  } finally {
    lease.done();
  }
}

async function scoreWithWorkers(dump: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions, options: ParallelEvaluateOptions,
  threads: number, pool: ThreadPool<ScoreRequests>): Promise<Evaluation> {
  const setup = prepareEvaluation(dump, metrics, conventions, { ...options, groups: options.groups ?? sharedGroups(dump) });
  const sensitivity = setup.sensitivity ? newSensitivityPass(setup) : undefined;
  // Every per-query column in one shared buffer (columnMemory.ts): its pages are first touched by the scoring threads.
  const layout = (memory: ColumnMemory) => {
    const perQuery = allocatePerQuery(setup.queryCount, metrics, setup.hasRbp, memory);
    return { perQuery, recorded: sensitivity && sensitivityColumns(sensitivity, setup.queryCount, memory) };
  };
  const { perQuery, recorded } = layout(sharedColumnMemory(layout));
  if (recorded) sensitivity!.recordInto(recorded);
  const bounds = splitByRows(setup.groups.start, Math.min(setup.queryCount, threads * engineSettings().tuning.scoreChunksPerThread));
  const next = new Int32Array(new SharedArrayBuffer(4));
  // Workers only find repeated items within a query: query-scoped keys serve as ids there.
  // The side table goes without its item pool: scoring reads only the grades (and a pool would be copied).
  const side = dump.unretrieved && { start: dump.unretrieved.start, grade: dump.unretrieved.grade, item: dump.unretrieved.item, line: dump.unretrieved.line,
    firstAbsentQuery: dump.unretrieved.firstAbsentQuery };
  const items = dump.itemKey !== undefined ? { itemKey: dump.itemKey } : { item: dump.item };
  const columns: ScoredColumns = { ...items, label: dump.label, score: dump.score, ...(side ? { unretrieved: side } : {}) };
  const task: ScoreRangeTask = { setup, columns, bounds, next, perQuery, sensitivity: recorded };
  const running = askWorkers(pool, threads - 1, task, options.signal);
  const tally = emptyTally();
  if (engineSettings().tuning.workersFirst) await running.started;
  claimChunks(new RangeScorer(setup, dump, perQuery, sensitivity), bounds, next, tally, options);
  for (const result of await running.results) addTally(tally, result.tally);
  options.onProgress?.(1);
  if (sensitivity && recorded) sensitivity.sumColumns(recorded, tally.sensitivityNoRelevant);
  // The columns stay in shared memory: nothing transfers an evaluation, and posting one shares them, which
  // no thread writes to once scored (copying them out took 0.2 s of this thread at a million queries).
  return finishEvaluation(setup, dump, perQuery, tally, sensitivity, recorded);
}

/**
 * Query range starts (parts <= queries; the last entry is the query count), the rows of each range
 * shrinking along the dump as shrinkingEnds says, so the scoring threads finish together.
 */
export function splitByRows(start: Uint32Array, parts: number): number[] {
  const queries = start.length - 1;
  const rows = start[queries]!;
  const bounds = [0];
  const ends = shrinkingEnds(parts);
  for (let k = 1; k < parts; k++) {
    const target = rows * ends[k - 1]!;
    let lo = bounds.at(-1)!;
    let hi = queries;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (start[mid]! < target) lo = mid + 1;
      else hi = mid;
    }
    // The nearer of the two query starts around the target; every range keeps at least one query.
    if (lo > 0 && target - start[lo - 1]! < start[lo]! - target) lo--;
    bounds.push(Math.max(bounds.at(-1)! + 1, Math.min(lo, queries - (parts - k))));
  }
  bounds.push(queries);
  return bounds;
}

/** Scores chunks until none is left (the score worker's body); `onFirstClaim` runs once a chunk is taken. */
export function runScoreRangeTask(task: ScoreRangeTask, onFirstClaim?: () => void): ScoreRangeResult {
  const sensitivity = task.sensitivity ? newSensitivityPass(task.setup) : undefined;
  if (sensitivity && task.sensitivity) sensitivity.recordInto(task.sensitivity);
  const tally = emptyTally();
  claimChunks(new RangeScorer(task.setup, task.columns, task.perQuery, sensitivity), task.bounds, task.next, tally, {}, onFirstClaim);
  return { tally };
}

function claimChunks(scorer: RangeScorer, bounds: readonly number[], next: Int32Array, tally: RangeTally,
  options: Pick<EvaluateOptions, 'signal' | 'onProgress'>, onFirstClaim?: () => void): void {
  const chunks = bounds.length - 1;
  for (;;) {
    const c = Atomics.add(next, 0, 1);
    if (c >= chunks) return;
    onFirstClaim?.();
    onFirstClaim = undefined;
    options.onProgress?.(c / chunks);
    scorer.score(bounds[c]!, bounds[c + 1]!, tally, { signal: options.signal });
  }
}

/** groupByQuery written straight into shared memory, so workers read it without a copy. */
function sharedGroups(dump: RankedDump): QueryGroups {
  return groupByQuery(dump, sharedColumn);
}

/** What a score thread answers (scoreWorker.ts); it reports progress once, when it claims its first chunk. */
export type ScoreRequests = {
  scoreRange: { params: ScoreRangeTask; result: ScoreRangeResult };
};

/** The score workers' answers, and when each has claimed its first chunk (or finished without one). */
interface Running {
  readonly results: Promise<ScoreRangeResult[]>;
  readonly started: Promise<void>;
}

function askWorkers(pool: ThreadPool<ScoreRequests>, count: number, task: ScoreRangeTask, signal: AbortSignal | undefined): Running {
  const claims: Promise<void>[] = [];
  const requests = Array.from({ length: count }, () => {
    let claimed = () => undefined as void;
    claims.push(new Promise<void>((resolve) => (claimed = resolve)));
    const request = pool.request('scoreRange', task, { signal, onProgress: () => claimed() });
    return request.finally(() => claimed());
  });
  const results = Promise.all(requests);
  // Keep a rejection from going unhandled while this thread is busy with its own chunks.
  results.catch(() => undefined);
  return { results, started: Promise.all(claims).then(() => undefined) };
}
