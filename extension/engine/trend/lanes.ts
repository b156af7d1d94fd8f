/**
 * Scores the checkpoints of a series on several lanes at once: the calling thread and checkpoint worker
 * threads (dist/checkpointWorker.js, asked through the engine's pool), each taking the next checkpoint
 * as it finishes the last. A lane
 * holds one dump at a time and keeps only its per-query columns, so memory grows with the lanes, not
 * with the series. Results come back per checkpoint in series order, whichever lane scored them.
 */
import { statSync } from 'node:fs';
import { totalmem } from 'node:os';
import { freeCores } from '../evaluate/coreMeter';
import { ThreadPool } from '../threads/pool';
import { scoreCheckpoint, type CheckpointRequests, type CheckpointTask, type ScoredCheckpoint } from './checkpoint';

/** More lanes than this wait on the disk and the allocator more than they gain (measured in bench-runs). */
const MAX_LANES = 4;
/**
 * Peak memory of a lane per byte of the checkpoint file it reads (the file's text chunk, the columns and
 * id pools, the scoring scratch): about 6 on the bench's CSV; 10 leaves room for other formats.
 */
const LANE_BYTES_PER_FILE_BYTE = 10;
/** What the lanes together may hold, at most: the series' target budget, or a quarter of the machine. */
const LANE_MEMORY_BUDGET = Math.min(1 << 30, totalmem() / 4);

/**
 * Lanes for `count` checkpoints whose largest file has `largestBytes`: one per core that other programs
 * leave free (`otherBusyCores`, as the scoring threads of one dump count them; at most MAX_LANES),
 * fewer when the dumps are so large that the lanes' memory would pass the budget, and a single lane for
 * two checkpoints or fewer (a worker's start costs about what a small checkpoint does). A lane on a core
 * that is busy anyway costs a fifth more CPU in all (its start, a second heap) and made the series
 * slower, not faster, under a load of 12 on 2 cores (bench-runs).
 */
export function seriesLanes(count: number, largestBytes: number, requested?: number, otherBusyCores = 0): number {
  if (requested !== undefined) return Math.max(1, Math.min(requested, count));
  if (count <= 2) return 1;
  const byMemory = Math.max(1, Math.floor(LANE_MEMORY_BUDGET / Math.max(1, largestBytes * LANE_BYTES_PER_FILE_BYTE)));
  return Math.max(1, Math.min(MAX_LANES, freeCores(otherBusyCores), byMemory, count));
}

/** The largest of the files (0 for one that cannot be read now: its own read reports why). */
export function largestFile(paths: readonly string[]): number {
  let largest = 0;
  for (const path of paths) {
    try {
      largest = Math.max(largest, statSync(path).size);
    } catch {
      // reported by the read of that checkpoint
    }
  }
  return largest;
}

export interface LaneOptions {
  readonly lanes: number;
  readonly signal?: AbortSignal;
}

/**
 * Scores checkpoints `indices` (tasks from `task`) on `lanes` lanes. Each entry of the result settles
 * with its checkpoint's columns or its error; a failure does not stop the other checkpoints unless
 * `signal` aborts. Worker threads are stopped when every checkpoint has settled.
 */
export function scoreOnLanes(indices: readonly number[], task: (i: number) => CheckpointTask, options: LaneOptions): Map<number, Promise<ScoredCheckpoint>> {
  const settle = new Map<number, { resolve: (s: ScoredCheckpoint) => void; reject: (e: unknown) => void }>();
  const results = new Map<number, Promise<ScoredCheckpoint>>();
  for (const i of indices) {
    const p = new Promise<ScoredCheckpoint>((resolve, reject) => settle.set(i, { resolve, reject }));
    p.catch(() => undefined); // awaited in series order by the caller; a later failure must not go unhandled meanwhile
    results.set(i, p);
  }
  const queue = [...indices];
  const work = async (score: (t: CheckpointTask) => Promise<ScoredCheckpoint>): Promise<void> => {
    for (let i = queue.shift(); i !== undefined; i = queue.shift()) {
      if (options.signal?.aborted) {
        settle.get(i)!.reject(options.signal.reason ?? new Error('cancelled'));
        continue;
      }
      try {
        settle.get(i)!.resolve(await score(task(i)));
      } catch (e) {
        settle.get(i)!.reject(e);
      }
    }
  };
  const pool = options.lanes > 1 && indices.length > 1 ? ThreadPool.forScript<CheckpointRequests>('checkpointWorker', Math.min(options.lanes, indices.length) - 1) : undefined;
  const lanes = [work((t) => scoreCheckpoint(t, options.signal))];
  if (pool) {
    pool.warm(pool.maxThreads);
    for (let l = 0; l < pool.maxThreads; l++) lanes.push(work((t) => pool.request('scoreCheckpoint', t, options.signal ? { signal: options.signal } : {})));
  }
  void Promise.all(lanes).finally(() => pool?.close());
  return results;
}
