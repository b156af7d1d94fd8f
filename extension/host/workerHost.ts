/**
 * The extension host's handle on the engine worker thread. All reading and evaluating happens there,
 * so the host's event loop never stalls on a big dump. The thread starts on first use and is started
 * again after a crash; a crash rejects whatever was pending instead of leaving callers hanging.
 * No `vscode` import, so the command line and tests use it too.
 */
import { Worker } from 'node:worker_threads';
import { RequestAbortedError, RequestClient, RequestTimeoutError, type Method, type ParamsOf, type ResultOf } from '../channel/request';
import { createCancelFlags, markCancelled } from '../worker/cancelFlags';
import { isProgressEvent, type WorkerRequests } from '../protocol/worker';
import type { PartialOverview } from '../protocol/partialOverview';

export interface WorkerCallOptions {
  readonly signal?: AbortSignal;
  readonly timeoutMs?: number;
  /** `partial`: a dump streaming in, its overview so far. */
  readonly onProgress?: (fraction: number | null, message: string, partial?: PartialOverview) => void;
}

/** Loads can take long on big files; page and detail requests should not. */
const DEFAULT_TIMEOUT_MS = 60_000;
export const LOAD_TIMEOUT_MS = 15 * 60_000;

export class EngineWorker {
  private worker: Worker | undefined;
  private client: RequestClient<WorkerRequests> | undefined;
  private readonly progress = new Map<number, NonNullable<WorkerCallOptions['onProgress']>>();
  private disposed = false;
  private flags = new Int32Array(createCancelFlags());
  /** Set by warm(): the thread warms its code up on start (worker/warmUp.ts). */
  private warmUp = false;
  /** Bumped each time a thread starts; sessions held by an older thread are gone. */
  generation = 0;

  constructor(
    private readonly scriptPath: string,
    private readonly onCrash: (message: string) => void = () => {},
  ) {}

  async call<K extends Method<WorkerRequests>>(
    method: K,
    params: ParamsOf<WorkerRequests, K>,
    options: WorkerCallOptions = {},
  ): Promise<ResultOf<WorkerRequests, K>> {
    const client = this.ensureStarted();
    let id = -1;
    const onProgress = options.onProgress;
    const promise = client.request(method, params, {
      signal: options.signal,
      timeoutMs: options.timeoutMs ?? DEFAULT_TIMEOUT_MS,
      onId: (requestId) => {
        id = requestId;
        if (onProgress) this.progress.set(requestId, onProgress);
      },
    });
    const flags = this.flags;
    const settle = (error?: unknown): void => {
      this.progress.delete(id);
      // Reaches the worker even while it is busy in synchronous work (see cancelFlags).
      if (error instanceof RequestAbortedError || error instanceof RequestTimeoutError) markCancelled(flags, id);
    };
    promise.then(() => settle(), settle);
    return promise;
  }

  /**
   * Starts the thread now, so the first view does not wait for it to start and load the engine
   * (measured in the end-to-end run's first-screen figures). The thread (and any restart of it) also
   * reads and scores a small generated dump once, so the first real read runs compiled code.
   */
  warm(): void {
    this.warmUp = true;
    if (!this.disposed) this.ensureStarted();
  }

  get running(): boolean {
    return this.worker !== undefined;
  }

  dispose(): void {
    this.disposed = true;
    this.stop('the engine worker was stopped');
  }

  private ensureStarted(): RequestClient<WorkerRequests> {
    if (this.disposed) throw new Error('the engine worker was stopped');
    if (this.client) return this.client;
    const shared = createCancelFlags();
    this.flags = new Int32Array(shared);
    const worker = new Worker(this.scriptPath, { workerData: { cancelFlags: shared, warmUp: this.warmUp } });
    const client = new RequestClient<WorkerRequests>((message) => worker.postMessage(message), DEFAULT_TIMEOUT_MS);
    this.generation++;
    worker.on('message', (message: unknown) => {
      if (isProgressEvent(message)) this.progress.get(message.id)?.(message.fraction, message.message, message.partial);
      else client.handleMessage(message);
    });
    worker.on('error', (error) => {
      this.onCrash(error.message);
      this.stop(`the engine worker failed: ${error.message}`);
    });
    worker.on('exit', (code) => {
      if (this.worker === worker) this.stop(`the engine worker exited (code ${code})`);
    });
    // The worker must not keep the process (command line, tests) alive on its own.
    worker.unref();
    this.worker = worker;
    this.client = client;
    return client;
  }

  private stop(reason: string): void {
    const worker = this.worker;
    const client = this.client;
    this.worker = undefined;
    this.client = undefined;
    this.progress.clear();
    client?.dispose(reason);
    if (worker) void worker.terminate();
  }
}
