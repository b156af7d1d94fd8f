/**
 * The thread side of the worker pool (pool.ts): a thread script calls `serveThread` with its handlers
 * once, and then answers the pool's requests through the channel's RequestServer for as long as it
 * lives. A handler reports progress with `reportProgress`, sees cancellation on its context's signal,
 * and hands large results over without a copy by returning them through `transferring`.
 */
import { parentPort, type MessagePort } from 'node:worker_threads';
import { RequestServer, toErrorInfo, type HandlerContext, type RequestHandlers, type RequestMap } from '../../channel/request';
import type { ProgressEnvelope } from './progress';

/** Results whose buffers move to the asking thread instead of being copied. */
const transfers = new WeakMap<object, readonly ArrayBuffer[]>();

/** Marks a handler's result so its `buffers` are transferred (they become unusable on this thread). */
export function transferring<T extends object>(result: T, buffers: readonly ArrayBuffer[]): T {
  transfers.set(result, buffers);
  return result;
}

function port(): MessagePort {
  if (parentPort === null) throw new Error('a thread script must run on a worker thread started by the pool');
  return parentPort;
}

export function reportProgress(context: HandlerContext, value: number): void {
  const message: ProgressEnvelope = { kind: 'progress', id: context.id, value };
  port().postMessage(message);
}

export function serveThread<M extends RequestMap>(handlers: RequestHandlers<M>): void {
  const parent = port();
  const server = new RequestServer(handlers, (message) => {
    const result = message.ok ? message.result : undefined;
    const list = typeof result === 'object' && result !== null ? transfers.get(result) : undefined;
    try {
      parent.postMessage(message, list === undefined ? undefined : [...list]);
    } catch (err) {
      // A result that cannot be posted (a buffer that cannot move) fails its request rather than leave it unanswered.
      if (!message.ok) throw err;
      parent.postMessage({ kind: 'response', id: message.id, ok: false, error: toErrorInfo(err) });
    }
  });
  parent.on('message', (message: unknown) => server.handleMessage(message));
}
