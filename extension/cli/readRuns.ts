/**
 * Reads the two runs of a comparison. A large B is parsed on a worker thread while this thread parses
 * A, so on two cores reading both takes about as long as reading one.
 */
import type { RankedDump } from '../engine/model/dump';
import { readDump, type ReadOptions } from '../engine/readers/index';

/** Below this size B is read after A on this thread: starting a parse worker costs more than it saves. */
export const CONCURRENT_FROM_BYTES = 16 << 20;

export interface ReadRunsOptions {
  /** B's size in bytes, which decides whether it is read at the same time as A. */
  readonly sizeB: number;
  readonly concurrentFromBytes?: number;
  /** Fraction of both reads done. */
  readonly onProgress?: ((fraction: number) => void) | undefined;
}

/** When both reads fail, A's error is the one thrown, as when they are read one after the other. */
/** `read` applies to both runs, or is given per run as [A's, B's]. */
export async function readRuns(pathA: string, pathB: string, read: ReadOptions | readonly [ReadOptions, ReadOptions], options: ReadRunsOptions):
  Promise<[RankedDump, RankedDump]> {
  const [readA, readB] = Array.isArray(read) ? read as readonly [ReadOptions, ReadOptions] : [read as ReadOptions, read as ReadOptions];
  const done = [0, 0];
  const report = (k: number) => options.onProgress && ((f: number) => {
    done[k] = f;
    options.onProgress!((done[0]! + done[1]!) / 2);
  });
  if (options.sizeB < (options.concurrentFromBytes ?? CONCURRENT_FROM_BYTES)) {
    const a = await readDump(pathA, { ...readA, onProgress: report(0) });
    return [a, await readDump(pathB, { ...readB, onProgress: report(1) })];
  }
  const [a, b] = await Promise.allSettled([
    readDump(pathA, { ...readA, onProgress: report(0) }),
    readDump(pathB, { ...readB, onProgress: report(1), offThread: true }),
  ]);
  if (a.status === 'rejected') throw a.reason;
  if (b.status === 'rejected') throw b.reason;
  return [a.value, b.value];
}
