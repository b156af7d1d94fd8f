/**
 * Text made from the per-query columns of a finished evaluation, chunk by chunk, by a renderer a reporter
 * registered (chunkOutput.ts), and handed to the caller in query order: this thread renders chunks and,
 * for many queries, a score thread renders others at the same time.
 *
 * Rendering after the scoring rather than during it (each scoring thread rendering the chunks it had just
 * scored, as before) keeps no text waiting: a document whose head needs every query scored held all of its
 * records until the end. On 10M rows in 1M queries that was 350 MB of JSON records, and rendering them
 * in the scoring threads took 0.6 s of the scoring's wall time against 0.77 s on this thread alone
 * afterwards (its memory was new, page faults and all, where pieces written and dropped reuse theirs).
 *
 * A chunk goes to a score thread only when its columns and the renderer's data are in shared memory
 * (`ChunkWork.shared`), so a request copies a few numbers rather than the columns.
 */
import { availableParallelism } from 'node:os';
import { engineActivity } from '../config';
import { CancelledError } from '../errors';
import { QUERIES_PER_CHUNK, renderChunk, type ChunkWork } from '../evaluate/chunkOutput';
import type { PerQueryColumns } from '../evaluate/types';
import { leasePool } from './keptPools';
import type { ThreadPool } from './pool';

/**
 * From this many queries a score thread helps: one renders about 1.3M JSON records a second, and a new
 * thread takes about 0.1 s to start (this thread renders ahead meanwhile, see MAX_AHEAD).
 */
const PARALLEL_FROM_QUERIES = 200_000;
/** Chunks this thread renders ahead of the one it must write next while a score thread works on that one. */
export const MAX_AHEAD = 3;
/**
 * The same until some thread has answered: a thread takes 0.1-0.2 s to start, and with three chunks ready
 * this thread sat idle for 0.17 s of that (1M JSON records, profile). Eight chunks of 16k records are about
 * 0.2 s of rendering here and hold at most some 50 MB.
 */
export const MAX_AHEAD_WHILE_STARTING = 8;
const MAX_THREADS = 4;

/** What a score thread is asked: one chunk of text. */
export interface RenderChunkTask {
  readonly work: ChunkWork;
  readonly perQuery: PerQueryColumns;
  readonly from: number;
  readonly to: number;
}

export type RenderRequests = {
  renderChunk: { params: RenderChunkTask; result: { readonly utf8: Uint8Array } };
};

export interface RenderInOrderOptions {
  /** Threads including this one; default: 1 below PARALLEL_FROM_QUERIES queries, else up to the cores (at most 4). */
  readonly threads?: number;
  readonly signal?: AbortSignal;
  /** Queries per chunk (default QUERIES_PER_CHUNK); tests make chunks small to have many. */
  readonly chunkQueries?: number;
}

/** True when the columns live in shared memory (a scoring on several threads leaves them there). */
function sharedColumns(perQuery: PerQueryColumns): boolean {
  return perQuery.items.buffer instanceof SharedArrayBuffer && perQuery.values.every((v) => v.buffer instanceof SharedArrayBuffer);
}

export function renderThreads(queryCount: number, threads: number | undefined): number {
  if (threads !== undefined) return Math.max(1, Math.min(16, Math.floor(threads)));
  return queryCount < PARALLEL_FROM_QUERIES ? 1 : Math.min(MAX_THREADS, availableParallelism());
}

/**
 * Calls `write` with the text of queries [0, queryCount) in chunks of QUERIES_PER_CHUNK, in query order
 * (`chunk` counts from 0); the bytes are the renderer's, whichever thread made them. `work` may be given as
 * the function that makes it: the threads then start before it is made, and their 0.1-0.2 s of start-up
 * overlaps its making (packing 1M query names takes about 0.1 s).
 */
export async function renderInOrder(workOrMaker: ChunkWork | (() => ChunkWork), perQuery: PerQueryColumns, queryCount: number,
  write: (utf8: Uint8Array, chunk: number) => void, options: RenderInOrderOptions = {}): Promise<void> {
  const size = Math.max(1, Math.floor(options.chunkQueries ?? QUERIES_PER_CHUNK));
  const chunks = Math.ceil(queryCount / size);
  const threads = Math.min(renderThreads(queryCount, options.threads), chunks);
  const rangeOf = (k: number): [number, number] => [k * size, Math.min(queryCount, (k + 1) * size)];
  const maybeShared = typeof workOrMaker === 'function' || workOrMaker.shared === true;
  let lease = threads > 1 && maybeShared && sharedColumns(perQuery) ? leasePool<RenderRequests>('scoreWorker', threads - 1) : undefined;
  lease?.pool.warm(lease.workers);
  let work: ChunkWork;
  try {
    work = typeof workOrMaker === 'function' ? workOrMaker() : workOrMaker;
  } catch (error) {
    lease?.done();
    throw error;
  }
  if (lease !== undefined && work.shared !== true) {
    lease.done();
    lease = undefined;
  }
  if (lease === undefined) {
    for (let k = 0; k < chunks; k++) {
      if (options.signal?.aborted) throw new CancelledError();
      write(renderChunk(work, perQuery, ...rangeOf(k)), k);
    }
    return;
  }
  try {
    await renderWithThreads(work, perQuery, rangeOf, chunks, write, lease.pool, lease.workers, options.signal);
  } finally {
    lease.done();
  }
}

/**
 * Chunks are taken in order. The chunk due next, when not yet taken, is rendered here; each thread then
 * gets the earliest chunks not taken, two at a time. While the chunk due next is with a thread, this one
 * renders later chunks itself (up to MAX_AHEAD waiting, more until a thread has answered), so it is not
 * idle while a thread starts.
 */
export async function renderWithThreads(work: ChunkWork, perQuery: PerQueryColumns, rangeOf: (chunk: number) => [number, number], chunks: number,
  write: (utf8: Uint8Array, chunk: number) => void, pool: Pick<ThreadPool<RenderRequests>, 'request'>, workers: number,
  signal: AbortSignal | undefined): Promise<void> {
  const ready = new Map<number, Uint8Array>();
  const asked = new Map<number, Promise<void>>();
  let failure: unknown;
  let untaken = 0;
  let answered = false;
  const takeNext = (): number => {
    while (untaken < chunks && (ready.has(untaken) || asked.has(untaken))) untaken++;
    return untaken < chunks ? untaken++ : -1;
  };
  const here = (k: number) => renderChunk(work, perQuery, ...rangeOf(k));
  const ask = (k: number) => {
    const [from, to] = rangeOf(k);
    const request = pool.request('renderChunk', { work, perQuery, from, to }, { signal }).then(
      (result) => {
        answered = true;
        ready.set(k, result.utf8);
        engineActivity().chunksRenderedElsewhere++;
      },
      (err: unknown) => void (failure ??= err),
    ).finally(() => asked.delete(k));
    asked.set(k, request);
  };
  for (let k = 0; k < chunks; k++) {
    // A thread just started is slow: the first chunk, and any due chunk no thread has, is made here.
    const mine = untaken === k;
    if (mine) untaken++;
    for (;;) {
      if (failure !== undefined) throw failure;
      if (signal?.aborted) throw new CancelledError();
      while (asked.size < 2 * workers) {
        const next = takeNext();
        if (next < 0) break;
        ask(next);
      }
      if (mine) ready.set(k, here(k));
      if (ready.has(k)) break;
      const waiting = asked.get(k)!;
      const ahead = ready.size < (answered ? MAX_AHEAD : MAX_AHEAD_WHILE_STARTING) ? takeNext() : -1;
      if (ahead < 0) {
        await waiting;
        continue;
      }
      ready.set(ahead, here(ahead));
      // Lets finished requests land before looking again.
      await new Promise<void>((resolve) => setImmediate(resolve));
    }
    write(ready.get(k)!, k);
    ready.delete(k);
  }
}
