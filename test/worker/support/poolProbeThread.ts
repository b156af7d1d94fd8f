/**
 * A thread script for the worker pool's own tests (test/worker/pool.test.ts): each method shows one
 * way a thread's request can end (an answer, an input error, a plain failure, a hang, a loop that never
 * yields, a thread that exits) without the engine's parsing or scoring in the way.
 */
import { threadId } from 'node:worker_threads';
import { InputError } from '../../../extension/engine/errors';
import { reportProgress, serveThread, transferring } from '../../../extension/engine/threads/threadServer';

export type ProbeRequests = {
  /** Answers with the text and the thread's id (to see a thread reused). */
  echo: { params: { text: string }; result: { text: string; thread: number } };
  /** Answers with a buffer of `length` bytes counting up, transferred rather than copied. */
  bytes: { params: { length: number }; result: { data: Uint8Array } };
  /** Answers with a buffer in shared memory marked for transfer, which posting refuses. */
  untransferable: { params: Record<string, never>; result: { data: Int32Array } };
  /** Throws an InputError with these parts. */
  refuse: { params: { expected: string; file: string; line: number; found: string }; result: never };
  /** Throws a plain Error with this message. */
  fail: { params: { message: string }; result: never };
  /** Reports progress 1, 2, 3 and then waits for its cancellation, never answering. */
  hang: { params: Record<string, never>; result: never };
  /** Reports progress 1 and then loops without ever yielding: only terminating the thread ends it. */
  spin: { params: Record<string, never>; result: never };
  /** Ends the thread with this exit code. */
  exit: { params: { code: number }; result: never };
  /** Sets flag[0] to 1 and wakes whoever waits on it (flag lives in a SharedArrayBuffer). */
  raise: { params: { flag: Int32Array }; result: { thread: number } };
};

serveThread<ProbeRequests>({
  echo: ({ text }) => ({ text, thread: threadId }),
  bytes: ({ length }) => {
    const data = Uint8Array.from({ length }, (_, i) => i & 255);
    return transferring({ data }, [data.buffer]);
  },
  untransferable: () => {
    const data = new Int32Array(new SharedArrayBuffer(16));
    return transferring({ data }, [data.buffer as unknown as ArrayBuffer]);
  },
  refuse: ({ expected, file, line, found }) => {
    throw new InputError(expected, file, line, found);
  },
  fail: ({ message }) => {
    throw new Error(message);
  },
  hang: (_params, context) => {
    for (const step of [1, 2, 3]) reportProgress(context, step);
    return new Promise<never>((_resolve, reject) => context.signal.addEventListener('abort', () => reject(new Error('cancelled'))));
  },
  spin: (_params, context) => {
    reportProgress(context, 1);
    let turns = 0;
    for (;;) turns = (turns + 1) | 0;
  },
  exit: ({ code }) => process.exit(code),
  raise: ({ flag }) => {
    Atomics.store(flag, 0, 1);
    Atomics.notify(flag, 0);
    return { thread: threadId };
  },
});
