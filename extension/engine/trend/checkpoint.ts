/**
 * Reads and scores one checkpoint of a series and keeps only its per-query columns. Shared by the
 * command line's own thread and the checkpoint worker, so both lanes compute exactly the same thing.
 */
import { evaluate, gradeRange } from '../evaluate/evaluate';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import { readDump, type ReadOptions } from '../readers/index';
import { checkpointColumns, type CheckpointColumns } from './trend';

export interface CheckpointTask {
  readonly path: string;
  readonly read: Omit<ReadOptions, 'signal' | 'onProgress'>;
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
}

export interface ScoredCheckpoint {
  readonly columns: CheckpointColumns;
  /** Highest judged grade of the dump (ERR's g_max for the series is taken from the first checkpoint). */
  readonly highestGrade: number;
}

export async function scoreCheckpoint(task: CheckpointTask): Promise<ScoredCheckpoint> {
  const dump = await readDump(task.path, task.read);
  const highestGrade = gradeRange(dump).highest;
  const evaluation = evaluate(dump, task.metrics, task.conventions, { sensitivity: false });
  return { columns: checkpointColumns(evaluation, (q) => dump.queries.get(q)), highestGrade };
}
