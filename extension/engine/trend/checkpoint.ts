/**
 * Reads and scores one checkpoint of a series and keeps only its per-query columns and its intervals.
 * Shared by every lane (the calling thread and the checkpoint workers), so all compute exactly the same
 * thing. Reading and scoring go through the engine's entry, which decides the read and score threads
 * from the dump's size as it does for `eval`.
 */
import { gradeRange } from '../evaluate/evaluate';
import { evaluateDump, readDump } from '../index';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import type { ReadOptions } from '../readers/index';
import type { Interval } from '../compare/bootstrap';
import { checkpointColumns, checkpointIntervals, type CheckpointColumns } from './trend';

export interface CheckpointTask {
  readonly path: string;
  readonly read: Omit<ReadOptions, 'signal' | 'onProgress'>;
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  /** The bootstrap of each checkpoint's interval, computed in the lane that scored it. */
  readonly bootstrap: { readonly resamples: number; readonly seed: number };
}

export interface ScoredCheckpoint {
  readonly columns: CheckpointColumns;
  /** Per metric, the 95% interval of the checkpoint's mean. */
  readonly intervals: readonly Interval[];
  /** Highest judged grade of the dump (ERR's g_max for the series is taken from the first checkpoint). */
  readonly highestGrade: number;
}

/** What a checkpoint worker thread (threads/checkpointWorker.ts) answers, through the engine's pool. */
export type CheckpointRequests = {
  scoreCheckpoint: { params: CheckpointTask; result: ScoredCheckpoint };
};

export async function scoreCheckpoint(task: CheckpointTask, signal?: AbortSignal): Promise<ScoredCheckpoint> {
  let dump: Awaited<ReturnType<typeof readDump>> | undefined = await readDump(task.path, { ...task.read, ...(signal ? { signal } : {}) });
  const highestGrade = gradeRange(dump).highest;
  const evaluation = await evaluateDump(dump, task.metrics, task.conventions, { sensitivity: false, ...(signal ? { signal } : {}) });
  const queries = dump.queries;
  const columns = checkpointColumns(evaluation, (q) => queries.get(q));
  dump = undefined; // the rows can go before the bootstrap runs
  const intervals = await checkpointIntervals(columns.values, task.bootstrap.resamples, task.bootstrap.seed);
  return { columns, intervals, highestGrade };
}
