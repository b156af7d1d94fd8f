/**
 * Scores the checkpoints of a series on several lanes at once: the calling thread and checkpoint worker
 * threads (dist/checkpointWorker.js), each taking the next checkpoint as it finishes the last. A lane
 * holds one dump at a time and keeps only its per-query columns, so memory grows with the lanes, not
 * with the series. Results come back per checkpoint in series order, whichever lane scored them.
 */
import { statSync } from 'node:fs';
import { availableParallelism, totalmem } from 'node:os';
import { join } from 'node:path';
import type { Worker } from 'node:worker_threads';
import { existsSync } from 'node:fs';
import { engineSettings } from '../config';
import { InputError } from '../errors';
import { startThread } from '../threads/spawn';
import { scoreCheckpoint, type CheckpointTask, type ScoredCheckpoint } from './checkpoint';

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
 * Lanes for `count` checkpoints whose largest file has `largestBytes`: one per core (at most
 * MAX_LANES), fewer when the dumps are so large that the lanes' memory would pass the budget, and a
 * single lane for two checkpoints or fewer (a worker's start costs about what a small checkpoint does).
 */
export function seriesLanes(count: number, largestBytes: number, requested?: number): number {
  if (requested !== undefined) return Math.max(1, Math.min(requested, count));
  if (count <= 2) return 1;
  const byMemory = Math.max(1, Math.floor(LANE_MEMORY_BUDGET / Math.max(1, largestBytes * LANE_BYTES_PER_FILE_BYTE)));
  return Math.max(1, Math.min(MAX_LANES, availableParallelism(), byMemory, count));
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
  const workers: CheckpointLane[] = [];
  const lanes = [work((t) => scoreCheckpoint(t, options.signal))];
  for (let l = 1; l < Math.min(options.lanes, indices.length); l++) {
    const lane = CheckpointLane.start();
    if (!lane) break;
    workers.push(lane);
    lanes.push(work((t) => lane.score(t)));
  }
  void Promise.all(lanes).finally(() => workers.forEach((w) => w.close()));
  return results;
}

/** One checkpoint worker thread, fed one task at a time. */
class CheckpointLane {
  private readonly waiting = new Map<number, { resolve: (s: ScoredCheckpoint) => void; reject: (e: unknown) => void }>();
  private nextId = 0;

  private constructor(private readonly worker: Worker) {
    worker.on('message', (m: { id: number; scored?: ScoredCheckpoint; failure?: WorkerFailure }) => {
      const waiter = this.waiting.get(m.id);
      this.waiting.delete(m.id);
      if (m.scored) waiter?.resolve(m.scored);
      else waiter?.reject(rebuildError(m.failure!));
    });
    worker.on('error', (e) => {
      for (const w of this.waiting.values()) w.reject(e);
      this.waiting.clear();
    });
  }

  /** Undefined when threads are off or the bundle has no checkpoint worker: the calling thread does it all. */
  static start(): CheckpointLane | undefined {
    const dir = engineSettings().bundleDir;
    const script = dir === undefined ? undefined : join(dir, 'checkpointWorker.js');
    return script && existsSync(script) ? new CheckpointLane(startThread(script)) : undefined;
  }

  score(task: CheckpointTask): Promise<ScoredCheckpoint> {
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.waiting.set(id, { resolve, reject });
      this.worker.postMessage({ id, task });
    });
  }

  close(): void {
    void this.worker.terminate();
  }
}

interface WorkerFailure {
  readonly input?: { expected: string; file?: string; line?: number; found?: string };
  readonly message: string;
  readonly code?: unknown;
  readonly path?: unknown;
}

/** The worker's error as callers' error handling expects it (InputError, or a file error with its code). */
function rebuildError(f: WorkerFailure): Error {
  if (f.input) return new InputError(f.input.expected, f.input.file, f.input.line, f.input.found);
  return Object.assign(new Error(f.message), { code: f.code, path: f.path });
}
