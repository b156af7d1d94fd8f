/**
 * Runs block tasks on stream worker threads, each taking the next task as it finishes one, so a thread
 * slowed by a busy machine simply takes fewer. Without the thread script (tests that did not bundle it,
 * threads switched off) the tasks run one at a time on this thread, with the same results.
 */
import type { Worker } from 'node:worker_threads';
import { CancelledError } from '../errors';
import { startThread, threadScript } from '../threads/spawn';
import { readBlock, releaseBlockMemory, type BlockResult, type BlockTask } from './block';

export interface BlockRunner {
  /** Settles with the block's result; tasks start in the order they are given. */
  run(task: BlockTask): Promise<BlockResult>;
  /** Tasks that can run at once. */
  readonly lanes: number;
  stop(): void;
}

export function startBlockRunner(threads: number, signal: AbortSignal | undefined): BlockRunner {
  const script = threads >= 1 ? threadScript('streamWorker') : undefined;
  if (script === undefined) return localRunner(signal);
  return workerRunner(script, threads, signal);
}

function localRunner(signal: AbortSignal | undefined): BlockRunner {
  let chain: Promise<unknown> = Promise.resolve();
  return {
    lanes: 1,
    run(task) {
      const next = chain.then(() => {
        if (signal?.aborted) throw new CancelledError();
        return readBlock(task);
      });
      chain = next.catch(() => undefined);
      return next;
    },
    stop() {
      releaseBlockMemory();
    },
  };
}

interface Pending {
  readonly task: BlockTask;
  readonly resolve: (r: BlockResult) => void;
  readonly reject: (e: Error) => void;
}

function workerRunner(script: string, threads: number, signal: AbortSignal | undefined): BlockRunner {
  const idle: Worker[] = [];
  const busy = new Map<Worker, Pending>();
  const queue: Pending[] = [];
  const workers: Worker[] = [];
  let failure: Error | undefined;

  const fail = (err: Error) => {
    if (failure) return;
    failure = err;
    for (const w of workers) void w.terminate();
    for (const p of [...busy.values(), ...queue.splice(0)]) p.reject(err);
    busy.clear();
  };
  const onAbort = () => fail(new CancelledError());
  signal?.addEventListener('abort', onAbort);

  const dispatch = () => {
    while (idle.length > 0 && queue.length > 0 && !failure) {
      const worker = idle.pop()!;
      const job = queue.shift()!;
      busy.set(worker, job);
      worker.postMessage(job.task);
    }
  };
  for (let k = 0; k < threads; k++) {
    const worker = startThread(script);
    workers.push(worker);
    idle.push(worker);
    worker.on('message', (msg: { result?: BlockResult; failure?: string }) => {
      const job = busy.get(worker);
      busy.delete(worker);
      if (msg.result !== undefined) job?.resolve(msg.result);
      else fail(new Error(`stream worker failed: ${msg.failure}`));
      idle.push(worker);
      dispatch();
    });
    worker.on('error', (err) => fail(err));
    worker.on('exit', (code) => {
      if (!failure) fail(new Error(`stream worker exited with code ${code}`));
    });
  }
  return {
    lanes: threads,
    run(task) {
      if (failure) return Promise.reject(failure);
      return new Promise<BlockResult>((resolve, reject) => {
        queue.push({ task, resolve, reject });
        dispatch();
      });
    },
    stop() {
      signal?.removeEventListener('abort', onAbort);
      if (!failure) {
        failure = new CancelledError();
        for (const w of workers) void w.terminate();
      }
    },
  };
}
