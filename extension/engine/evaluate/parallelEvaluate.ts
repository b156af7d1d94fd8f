/**
 * Scores a large dump on several threads: the queries are cut into contiguous ranges of about equal
 * rows, this thread scores the first range while score workers fill the others, all writing into
 * per-query columns in shared memory. Means are then taken over the merged columns in query order,
 * and the sensitivity means over recorded per-query values, so the result is bit-identical to
 * evaluate() on one thread (partial sums added together would round differently).
 */
import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { CancelledError } from '../errors';
import type { RankedDump } from '../model/dump';
import type { QueryGroups } from '../model/groups';
import type { Conventions, MetricSpec } from '../metrics/conventions';
import {
  addTally,
  allocatePerQuery,
  evaluate,
  finishEvaluation,
  newSensitivityPass,
  prepareEvaluation,
  scoreQueryRange,
  type EvaluateOptions,
  type EvaluationSetup,
  type RangeTally,
  type ScoredColumns,
} from './evaluate';
import type { SensitivityColumns } from './sensitivity';
import type { Evaluation, PerQueryColumns } from './types';

/** Below this many rows starting a worker costs more than it saves. */
const PARALLEL_FROM_ROWS = 500_000;
const MAX_THREADS = 4;

declare const __dirname: string | undefined;
let workerScript: string | undefined = typeof __dirname === 'string' ? join(__dirname, 'scoreWorker.js') : undefined;

/** Where the bundled score worker lives (next to the bundle by default; tests point at a fresh build). */
export function setScoreWorkerScript(path: string | undefined): void {
  workerScript = path;
}

export interface ParallelEvaluateOptions extends EvaluateOptions {
  /** Scoring threads including this one; default: 1 below PARALLEL_FROM_ROWS rows, else the cores (at most 4). */
  threads?: number;
}

/** One range of queries for a score worker. Typed arrays on SharedArrayBuffers are shared, not copied. */
export interface ScoreRangeTask {
  readonly setup: EvaluationSetup;
  readonly columns: ScoredColumns;
  readonly from: number;
  readonly to: number;
  readonly perQuery: PerQueryColumns;
  readonly sensitivity?: SensitivityColumns;
}

export function scoringThreads(rows: number, threads: number | undefined): number {
  if (threads !== undefined) return Math.max(1, Math.min(16, Math.floor(threads)));
  return rows < PARALLEL_FROM_ROWS ? 1 : Math.min(MAX_THREADS, availableParallelism());
}

export async function evaluateInParallel(dump: RankedDump, metrics: readonly MetricSpec[], conventions: Conventions,
  options: ParallelEvaluateOptions = {}): Promise<Evaluation> {
  const threads = Math.min(scoringThreads(dump.rowCount, options.threads), dump.queries.size);
  if (threads <= 1 || workerScript === undefined || !existsSync(workerScript)) return evaluate(dump, metrics, conventions, options);
  const setup = prepareEvaluation(dump, metrics, conventions, { ...options, groups: options.groups ?? sharedGroups(dump) });
  const shared = (bytes: number) => new SharedArrayBuffer(bytes);
  const perQuery = allocatePerQuery(setup.queryCount, metrics, setup.hasRbp, shared);
  const sensitivity = setup.sensitivity ? newSensitivityPass(setup) : undefined;
  const recorded: SensitivityColumns | undefined = sensitivity && {
    value: Array.from({ length: sensitivity.variantCount }, () => new Float64Array(shared(setup.queryCount * 8))),
    entered: Array.from({ length: sensitivity.variantCount }, () => new Uint8Array(shared(setup.queryCount))),
  };
  if (recorded) sensitivity!.recordInto(recorded);
  const bounds = splitByRows(setup.groups.start, threads);
  const columns: ScoredColumns = { item: dump.item, label: dump.label, score: dump.score, itemCount: dump.items.size };
  const tasks: ScoreRangeTask[] = bounds.slice(1, -1).map((from, k) => ({
    setup, columns, from, to: bounds[k + 2]!, perQuery, sensitivity: recorded,
  }));
  const running = runWorkers(workerScript, tasks, options.signal);
  // Keep a rejection from going unhandled while this thread is busy with its own range.
  running.catch(() => undefined);
  const share = (bounds[1]! - bounds[0]!) / Math.max(1, setup.queryCount);
  let tally: RangeTally;
  try {
    tally = scoreQueryRange(setup, dump, bounds[0]!, bounds[1]!, perQuery, sensitivity, {
      signal: options.signal,
      onProgress: options.onProgress && ((f) => options.onProgress!(f * share)),
    });
  } catch (err) {
    running.stop();
    throw err;
  }
  for (const t of await running) addTally(tally, t);
  options.onProgress?.(1);
  if (sensitivity && recorded) sensitivity.sumColumns(recorded, tally.sensitivityNoRelevant);
  return finishEvaluation(setup, dump, unshared(perQuery), tally, sensitivity);
}

/** Query range starts holding about equal rows each (parts <= queries); the last entry is the query count. */
export function splitByRows(start: Uint32Array, parts: number): number[] {
  const queries = start.length - 1;
  const rows = start[queries]!;
  const bounds = [0];
  for (let k = 1; k < parts; k++) {
    const target = (rows * k) / parts;
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

/** Scores one task's range on this thread (the score worker's body). */
export function runScoreRangeTask(task: ScoreRangeTask): RangeTally {
  const sensitivity = task.sensitivity ? newSensitivityPass(task.setup) : undefined;
  if (sensitivity && task.sensitivity) sensitivity.recordInto(task.sensitivity);
  return scoreQueryRange(task.setup, task.columns, task.from, task.to, task.perQuery, sensitivity);
}

/** groupByQuery's counting sort, written straight into shared memory so workers read it without a copy. */
function sharedGroups(dump: RankedDump): QueryGroups {
  const queryCount = dump.queries.size;
  const rows = dump.rowCount;
  const query = dump.query;
  const start = new Uint32Array(new SharedArrayBuffer((queryCount + 1) * 4));
  for (let r = 0; r < rows; r++) start[query[r]! + 1]++;
  for (let q = 0; q < queryCount; q++) start[q + 1] += start[q]!;
  const next = start.slice(0, queryCount);
  const rowsOfQuery = new Uint32Array(new SharedArrayBuffer(rows * 4));
  for (let r = 0; r < rows; r++) rowsOfQuery[next[query[r]!]!++] = r;
  return { rowsOfQuery, start };
}

/** Plain copies, so the evaluation can be posted or transferred like a single-thread one. */
function unshared(p: PerQueryColumns): PerQueryColumns {
  return {
    items: p.items.slice(),
    relevant: p.relevant.slice(),
    values: p.values.map((v) => v.slice()),
    inversions: p.inversions.slice(),
    inversionCost: p.inversionCost.slice(),
    skipped: p.skipped.slice(),
    ...(p.rbpResidual ? { rbpResidual: p.rbpResidual.slice() } : {}),
  };
}

type Running = Promise<RangeTally[]> & { stop(): void };

function runWorkers(script: string, tasks: ScoreRangeTask[], signal: AbortSignal | undefined): Running {
  const workers: Worker[] = [];
  let stop = () => undefined as void;
  const promise = new Promise<RangeTally[]>((resolve, reject) => {
    const results: (RangeTally | undefined)[] = tasks.map(() => undefined);
    let pending = tasks.length;
    let settled = false;
    const finish = (err?: Error) => {
      if (settled) return;
      settled = true;
      signal?.removeEventListener('abort', onAbort);
      for (const w of workers) void w.terminate();
      if (err) reject(err);
      else resolve(results as RangeTally[]);
    };
    const onAbort = () => finish(new CancelledError());
    stop = () => finish(new CancelledError());
    signal?.addEventListener('abort', onAbort);
    tasks.forEach((task, k) => {
      const worker = new Worker(script, { workerData: task });
      workers.push(worker);
      worker.on('message', (msg: { tally?: RangeTally; failure?: string }) => {
        if (msg.tally !== undefined) {
          results[k] = msg.tally;
          if (--pending === 0) finish();
        } else finish(new Error(`score worker failed: ${msg.failure}`));
      });
      worker.on('error', (err) => finish(err));
      worker.on('exit', (code) => {
        if (results[k] === undefined) finish(new Error(`score worker exited with code ${code}`));
      });
    });
  });
  return Object.assign(promise, { stop: () => stop() });
}
