/**
 * Scores a whole series in order of need: the first checkpoint alone (it fixes ERR's highest grade for
 * the series, or ERR values of different checkpoints would be on different scales), then the others on
 * as many lanes as the cores and memory allow. Checkpoints the caller already holds under the same
 * settings (a live series that grew by one) are not read again.
 */
import { CoreMeter } from '../evaluate/coreMeter';
import type { Conventions } from '../metrics/conventions';
import { anyNeeds, type MetricSpec } from '../metrics/registry';
import type { ReadOptions } from '../readers/index';
import type { CheckpointTask, ScoredCheckpoint } from './checkpoint';
import { scoreCheckpoint } from './checkpoint';
import { largestFile, scoreOnLanes, seriesLanes } from './lanes';

export interface SeriesScoringInput {
  /** Checkpoint files in series order. */
  readonly paths: readonly string[];
  /** Read options per checkpoint (side files may differ by file). */
  readonly read: (i: number) => Omit<ReadOptions, 'signal' | 'onProgress'>;
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  readonly bootstrap: { readonly resamples: number; readonly seed: number };
  /** Lanes wanted (1 keeps everything on this thread); chosen from cores and file sizes when absent. */
  readonly lanes?: number;
  readonly signal?: AbortSignal;
  /** A checkpoint already scored with exactly this task, if the caller kept one. */
  readonly known?: (i: number, task: CheckpointTask) => ScoredCheckpoint | undefined;
}

export interface ScoredSeries {
  /** The conventions every checkpoint was scored under (with ERR's highest grade filled in). */
  readonly conventions: Conventions;
  /** Per checkpoint in series order: its columns, or the error its read or scoring ended with. */
  readonly results: readonly Promise<ScoredCheckpoint>[];
  /** The tasks, for the caller's memory of what was scored how. */
  readonly tasks: readonly CheckpointTask[];
  /** Checkpoints read and scored now (the others were known). */
  readonly scoredNow: number;
}

/** Throws when the first checkpoint cannot be scored; later checkpoints' failures are in `results`. */
export async function scoreSeries(input: SeriesScoringInput): Promise<ScoredSeries> {
  const taskFor = (i: number, conventions: Conventions): CheckpointTask => ({
    path: input.paths[i]!, read: input.read(i), metrics: input.metrics, conventions, bootstrap: input.bootstrap,
  });
  let conventions = input.conventions;
  const firstTask = taskFor(0, conventions);
  let scoredNow = 0;
  // What other programs keep busy while the first checkpoint is scored decides the lanes for the rest.
  const meter = new CoreMeter();
  let first = input.known?.(0, firstTask);
  if (!first) {
    first = await scoreCheckpoint(firstTask, input.signal);
    scoredNow++;
  }
  if (conventions.maxGrade === undefined && anyNeeds(input.metrics, 'maxGrade') && first.highestGrade > 0) {
    conventions = { ...conventions, maxGrade: first.highestGrade };
  }
  // The first checkpoint's values stand under the filled-in grade too: it is that checkpoint's own
  // highest grade, which ERR takes by default. Its task stays the one it was scored with.
  const tasks = input.paths.map((_, i) => (i === 0 ? firstTask : taskFor(i, conventions)));
  const firstResult = first;
  const results: Promise<ScoredCheckpoint>[] = new Array(tasks.length);
  const missing: number[] = [];
  tasks.forEach((task, i) => {
    const known = i === 0 ? firstResult : input.known?.(i, task);
    if (known) results[i] = Promise.resolve(known);
    else missing.push(i);
  });
  if (missing.length > 0) {
    const lanes = seriesLanes(missing.length, largestFile(missing.map((i) => tasks[i]!.path)), input.lanes, meter.otherBusyCores());
    const scored = scoreOnLanes(missing, (i) => tasks[i]!, { lanes, ...(input.signal ? { signal: input.signal } : {}) });
    for (const [i, p] of scored) results[i] = p;
    scoredNow += missing.length;
  }
  return { conventions, results, tasks, scoredNow };
}
