/**
 * The engine's worker pool: threads running one bundled script (see threadServer.ts for their side),
 * asked typed requests through the channel's RequestClient. A thread is started when a request finds
 * none idle (or ahead of time by `warm`) and reused by the next request once it has answered.
 *
 * A request that fails or is cancelled takes its thread with it: the thread may still be deep in a loop
 * that cannot be interrupted, so it is terminated rather than reused, and `close` terminates the rest.
 * No thread outlives a failure (`engineActivity().liveThreads` counts them). Errors keep their text:
 * an input error thrown on a thread arrives as an InputError with the same `file:line: expected …`
 * message, a cancellation as CancelledError, anything else as the channel's RemoteError.
 */
import { basename } from 'node:path';
import type { Worker } from 'node:worker_threads';
import {
  ChannelClosedError,
  RemoteError,
  RequestAbortedError,
  RequestClient,
  type Method,
  type ParamsOf,
  type RequestMap,
  type ResultOf,
} from '../../channel/request';
import { CancelledError, InputError } from '../errors';
import { isProgressEnvelope } from './progress';
import { startThread, threadScript, type ThreadScript } from './spawn';

export interface PoolRequestOptions {
  /** Aborting rejects the request at once with CancelledError and stops its thread. */
  readonly signal?: AbortSignal;
  /** Receives the values the handler reports with `reportProgress`. */
  readonly onProgress?: (value: number) => void;
}

interface PoolThread<M extends RequestMap> {
  readonly worker: Worker;
  readonly client: RequestClient<M>;
  readonly progress: Map<number, (value: number) => void>;
  busy: boolean;
  /** Why the thread stopped by itself (an uncaught error, an exit); reported instead of "channel closed". */
  failure?: Error;
}

interface Waiter<M extends RequestMap> {
  resolve(thread: PoolThread<M>): void;
  reject(error: Error): void;
}

export class ThreadPool<M extends RequestMap> {
  private readonly threads: PoolThread<M>[] = [];
  private readonly waiting: Waiter<M>[] = [];
  private closed = false;

  /** A pool over a bundled thread script; undefined when threads are off or the script is not there. */
  static forScript<M extends RequestMap>(name: ThreadScript, maxThreads: number, idleUnref = false): ThreadPool<M> | undefined {
    const script = threadScript(name);
    return script === undefined ? undefined : new ThreadPool<M>(script, maxThreads, idleUnref);
  }

  constructor(
    private readonly script: string,
    readonly maxThreads: number,
    /**
     * An idle thread does not keep the process alive (a pool kept between reads, keptPools.ts): a process
     * that has nothing left to do exits with its kept threads idle, as it would without them.
     */
    private readonly idleUnref = false,
  ) {
    if (!(maxThreads >= 1)) throw new RangeError(`a thread pool needs at least one thread (got ${maxThreads})`);
  }

  /** Threads started and not yet stopped. */
  get size(): number {
    return this.threads.length;
  }

  /** Threads started and not answering a request now. */
  get idle(): number {
    return this.threads.filter((t) => !t.busy).length;
  }

  /** Starts threads up to `count` before their requests, so their start-up overlaps other work. */
  warm(count: number): void {
    while (!this.closed && this.threads.length < Math.min(count, this.maxThreads)) this.start();
  }

  /**
   * Posts the request at once when a thread is idle or can be started, before this call returns: a
   * caller that goes on to a long synchronous loop (a scoring thread claiming chunks beside its workers)
   * must not hold the message back until the loop ends, or the workers find no work left.
   */
  request<K extends Method<M>>(method: K, params: ParamsOf<M, K>, options: PoolRequestOptions = {}): Promise<ResultOf<M, K>> {
    if (options.signal?.aborted) return Promise.reject(new CancelledError());
    if (this.closed) return Promise.reject(this.closedError());
    const idle = this.takeThread();
    if (idle !== undefined) return this.run(idle, method, params, options);
    return new Promise<PoolThread<M>>((resolve, reject) => this.waiting.push({ resolve, reject }))
      .then((thread) => this.run(thread, method, params, options));
  }

  private async run<K extends Method<M>>(thread: PoolThread<M>, method: K, params: ParamsOf<M, K>, options: PoolRequestOptions): Promise<ResultOf<M, K>> {
    let id: number | undefined;
    try {
      const result = await thread.client.request(method, params, {
        timeoutMs: 0,
        signal: options.signal,
        onId: (requestId) => {
          id = requestId;
          if (options.onProgress) thread.progress.set(requestId, options.onProgress);
        },
      });
      this.release(thread);
      return result;
    } catch (error) {
      this.discard(thread);
      throw this.localError(thread, error);
    } finally {
      if (id !== undefined) thread.progress.delete(id);
    }
  }

  /** Terminates every thread; requests still running or waiting reject. */
  close(): Promise<void> {
    this.closed = true;
    for (const waiter of this.waiting.splice(0)) waiter.reject(new CancelledError());
    const stopping = this.threads.splice(0).map((thread) => this.stop(thread));
    return Promise.all(stopping).then(() => undefined);
  }

  private closedError(): Error {
    return new Error(`the pool of ${basename(this.script)} threads is closed`);
  }

  /** An idle thread, or a new one when the pool has room, marked busy; undefined when all are taken. */
  private takeThread(): PoolThread<M> | undefined {
    const thread = this.threads.find((t) => !t.busy) ?? (this.threads.length < this.maxThreads ? this.start() : undefined);
    if (thread !== undefined) {
      thread.busy = true;
      if (this.idleUnref) thread.worker.ref();
    }
    return thread;
  }

  private release(thread: PoolThread<M>): void {
    thread.busy = false;
    if (this.idleUnref) thread.worker.unref();
    this.handOver();
  }

  /** A waiting request takes an idle thread, or a new one when the pool has room. */
  private handOver(): void {
    if (this.closed || this.waiting.length === 0) return;
    const thread = this.takeThread();
    if (thread !== undefined) this.waiting.shift()!.resolve(thread);
  }

  private discard(thread: PoolThread<M>): void {
    const at = this.threads.indexOf(thread);
    if (at >= 0) this.threads.splice(at, 1);
    void this.stop(thread);
    this.handOver();
  }

  private stop(thread: PoolThread<M>): Promise<void> {
    thread.client.dispose(`the pool stopped its ${basename(this.script)} thread`);
    return thread.worker.terminate().then(() => undefined);
  }

  private start(): PoolThread<M> {
    const worker = startThread(this.script);
    const thread: PoolThread<M> = {
      worker,
      client: new RequestClient<M>((message) => worker.postMessage(message), 0),
      progress: new Map(),
      busy: false,
    };
    if (this.idleUnref) worker.unref();
    worker.on('message', (message: unknown) => {
      if (thread.client.handleMessage(message)) return;
      if (isProgressEnvelope(message)) thread.progress.get(message.id)?.(message.value);
    });
    worker.on('error', (error: Error) => {
      thread.failure ??= error;
      thread.client.dispose(error.message);
    });
    worker.on('exit', (code) => {
      thread.failure ??= new Error(`a ${basename(this.script)} thread exited with code ${code}`);
      thread.client.dispose(thread.failure.message);
      const at = this.threads.indexOf(thread);
      if (at >= 0) this.threads.splice(at, 1);
    });
    this.threads.push(thread);
    return thread;
  }

  private localError(thread: PoolThread<M>, error: unknown): Error {
    if (error instanceof RequestAbortedError) return new CancelledError();
    if (error instanceof ChannelClosedError) return this.closed ? new CancelledError() : (thread.failure ?? error);
    if (error instanceof RemoteError) return fromRemote(error);
    return error instanceof Error ? error : new Error(String(error));
  }
}

/** The engine's own error classes again, with the message they had on the thread. */
function fromRemote(error: RemoteError): Error {
  if (error.remoteName === 'CancelledError') return new CancelledError();
  if (error.remoteName === 'InputError') {
    const { expected, file, line, found } = error.fields;
    if (typeof expected === 'string') {
      const rebuilt = new InputError(expected, typeof file === 'string' ? file : undefined, typeof line === 'number' ? line : undefined,
        typeof found === 'string' ? found : undefined);
      if (rebuilt.message === error.message) return rebuilt;
    }
  }
  return error;
}
