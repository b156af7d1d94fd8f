/**
 * Thread pools kept between reads, for a process that reads dump after dump (the editor's engine
 * thread; `keepThreads` in config.ts). A new pool's thread takes about 0.1 s to start and runs its
 * first rows through code not yet compiled, which is why a one-off read uses threads only from about
 * 100 MB or 2M rows. A kept thread has paid both already (the editor warms it up at start), so a
 * read or scoring that finds one idle uses it from far smaller sizes (see the thresholds in
 * parallel.ts and parallelEvaluate.ts).
 *
 * `leasePool` is how the engine's readers and scorers get their threads either way: the kept pool, or
 * a pool of their own that `done` closes.
 */
import { availableParallelism } from 'node:os';
import { engineSettings } from '../config';
import type { RequestMap } from '../../channel/request';
import { ThreadPool } from './pool';
import type { ThreadScript } from './spawn';

/** Threads a kept pool may hold: as many as the parallel readers and scorers ever ask for. */
const KEPT_THREADS = 4;

/** Only the scripts a read and its scoring use are kept; a stream or a series starts its own. */
export type KeptScript = Extract<ThreadScript, 'parseWorker' | 'scoreWorker'>;

/** One pool per script; each is asked only that script's requests (the type each caller names). */
const kept = new Map<KeptScript, ThreadPool<RequestMap>>();

/** The kept pool of `name`, made on first use; undefined when threads are not kept or the script is missing. */
export function keptPool<M extends RequestMap>(name: KeptScript): ThreadPool<M> | undefined {
  if (!engineSettings().keepThreads) return undefined;
  if (!kept.has(name)) {
    const made = ThreadPool.forScript<RequestMap>(name, Math.min(KEPT_THREADS, Math.max(1, availableParallelism() - 1)), true);
    if (made === undefined) return undefined;
    kept.set(name, made);
  }
  return kept.get(name) as ThreadPool<M> | undefined;
}

/** Started threads of `name`'s kept pool idle now (0 when threads are not kept). */
export function idleKeptThreads(name: KeptScript): number {
  return engineSettings().keepThreads ? (kept.get(name)?.idle ?? 0) : 0;
}

/** Stops every kept thread (tests, and a process turning `keepThreads` off). */
export async function closeKeptPools(): Promise<void> {
  const pools = [...kept.values()];
  kept.clear();
  await Promise.all(pools.map((p) => p.close()));
}

/** Threads for one read or one scoring: the kept pool's, or a new pool of `workers` threads closed by `done`. */
export interface PoolLease<M extends RequestMap> {
  readonly pool: ThreadPool<M>;
  /** Requests the caller may post at once (threads besides its own). */
  readonly workers: number;
  readonly done: () => void;
}

export function leasePool<M extends RequestMap>(name: KeptScript, workers: number): PoolLease<M> | undefined {
  const shared = keptPool<M>(name);
  if (shared !== undefined) return { pool: shared, workers: Math.min(workers, shared.maxThreads), done: () => undefined };
  const own = ThreadPool.forScript<M>(name, workers);
  return own && { pool: own, workers, done: () => void own.close() };
}
