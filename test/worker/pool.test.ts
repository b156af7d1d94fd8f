/**
 * The engine's worker pool (extension/engine/threads/pool.ts) over a probe thread script bundled from
 * source: typed answers, reuse of a thread, progress, cancellation in the middle of a task (also of a
 * loop that never yields), errors carried across with their text unchanged, and no thread left
 * running after any of it (engineActivity().liveThreads counts the threads the engine started).
 */
import { join } from 'node:path';
import { build } from 'esbuild';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { RemoteError } from '../../extension/channel/request';
import { engineActivity } from '../../extension/engine/config';
import { CancelledError, InputError } from '../../extension/engine/errors';
import { ThreadPool } from '../../extension/engine/threads/pool';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import type { ProbeRequests } from './support/poolProbeThread';

const tmp = new TempDir();
let script = '';
const pools: ThreadPool<ProbeRequests>[] = [];

beforeAll(async () => {
  script = join(tmp.path, 'poolProbeThread.js');
  await build({ entryPoints: [join(__dirname, 'support/poolProbeThread.ts')], bundle: true, platform: 'node', format: 'cjs',
    outfile: script, logLevel: 'warning' });
});
afterEach(async () => {
  for (const pool of pools.splice(0)) await pool.close();
  await expect.poll(() => engineActivity().liveThreads, { timeout: 10_000 }).toBe(0);
});
afterAll(() => tmp.remove());

function newPool(maxThreads: number): ThreadPool<ProbeRequests> {
  const pool = new ThreadPool<ProbeRequests>(script, maxThreads);
  pools.push(pool);
  return pool;
}

/** Resolves when `onProgress` has seen `value`: the thread is then inside the handler. */
function progressUntil(value: number): { onProgress: (v: number) => void; reached: Promise<number[]> } {
  const seen: number[] = [];
  let reachedIt = (_: number[]) => undefined as void;
  const reached = new Promise<number[]>((resolve) => (reachedIt = resolve));
  return { onProgress: (v) => { seen.push(v); if (v === value) reachedIt(seen); }, reached };
}

describe('the worker pool', () => {
  it('answers typed requests and reuses an idle thread', async () => {
    const pool = newPool(2);
    const first = await pool.request('echo', { text: 'hex bolts' });
    const second = await pool.request('echo', { text: 'wing nuts' });
    expect(first.text).toBe('hex bolts');
    expect(second.text).toBe('wing nuts');
    expect(second.thread).toBe(first.thread);
    expect(pool.size).toBe(1);
  });

  it('posts a request before returning, so a thread works while the caller is in a loop that never yields', async () => {
    // The caller blocks its own thread until the worker raises the flag. Had the pool held the message
    // back until the caller's next turn of the event loop, the wait would time out with the flag at 0.
    const pool = newPool(1);
    const flag = new Int32Array(new SharedArrayBuffer(4));
    const answer = pool.request('raise', { flag });
    const outcome = Atomics.wait(flag, 0, 0, 20_000);
    expect(outcome === 'ok' || outcome === 'not-equal').toBe(true);
    expect(Atomics.load(flag, 0)).toBe(1);
    expect((await answer).thread).toBeGreaterThan(0);
  });

  it('runs requests made together on separate threads, never more than its size, the rest waiting their turn', async () => {
    const pool = newPool(2);
    const answers = await Promise.all(['a', 'b', 'c', 'd', 'e'].map((text) => pool.request('echo', { text })));
    expect(answers.map((a) => a.text)).toEqual(['a', 'b', 'c', 'd', 'e']);
    expect(new Set(answers.map((a) => a.thread)).size).toBe(2);
    expect(pool.size).toBe(2);
  });

  it('starts threads ahead of their requests with warm, up to its size', async () => {
    const pool = newPool(3);
    pool.warm(5);
    expect(pool.size).toBe(3);
    expect(engineActivity().liveThreads).toBe(3);
    const answers = await Promise.all(['a', 'b', 'c'].map((text) => pool.request('echo', { text })));
    expect(new Set(answers.map((a) => a.thread)).size).toBe(3);
  });

  it('hands a transferred buffer over intact', async () => {
    const { data } = await newPool(1).request('bytes', { length: 1000 });
    expect(data.length).toBe(1000);
    expect(data[999]).toBe(999 & 255);
  });

  it('fails a request whose answer cannot be posted, rather than leave it unanswered', async () => {
    const error = await newPool(1).request('untransferable', {}).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(RemoteError);
    expect((error as RemoteError).message).toMatch(/transfer/i);
  });

  it("carries an input error across with the same class and the same 'file:line: expected' text", async () => {
    const local = new InputError("a number in column 'score'", 'shop-search.csv', 12, 'n/a');
    const error = await newPool(1).request('refuse', { expected: "a number in column 'score'", file: 'shop-search.csv', line: 12, found: 'n/a' })
      .catch((e: unknown) => e);
    expect(error).toBeInstanceOf(InputError);
    expect((error as InputError).message).toBe(local.message);
    expect((error as InputError).message).toBe('shop-search.csv:12: expected a number in column \'score\' (found "n/a")');
    expect((error as InputError).line).toBe(12);
  });

  it('carries any other error across with its message unchanged, and stops the thread that threw', async () => {
    const pool = newPool(2);
    const error = await pool.request('fail', { message: 'the shelf index at aisle 7 is out of range' }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(RemoteError);
    expect((error as RemoteError).message).toBe('the shelf index at aisle 7 is out of range');
    expect((error as RemoteError).remoteName).toBe('Error');
    expect(pool.size).toBe(0);
    // The pool still serves: a new thread takes the next request.
    expect((await pool.request('echo', { text: 'after' })).text).toBe('after');
  });

  it('passes progress to the caller, and a cancel mid-task rejects with CancelledError and stops the thread', async () => {
    const pool = newPool(1);
    const controller = new AbortController();
    const watch = progressUntil(3);
    const hanging = pool.request('hang', {}, { signal: controller.signal, onProgress: watch.onProgress });
    expect(await watch.reached).toEqual([1, 2, 3]);
    controller.abort();
    await expect(hanging).rejects.toBeInstanceOf(CancelledError);
    expect(pool.size).toBe(0);
  });

  it('cancels a loop that never yields by terminating its thread', async () => {
    const pool = newPool(2);
    const controller = new AbortController();
    const watch = progressUntil(1);
    const spinning = pool.request('spin', {}, { signal: controller.signal, onProgress: watch.onProgress });
    await watch.reached;
    expect(engineActivity().liveThreads).toBe(1);
    controller.abort();
    await expect(spinning).rejects.toBeInstanceOf(CancelledError);
    await expect.poll(() => engineActivity().liveThreads, { timeout: 10_000 }).toBe(0);
  });

  it('refuses a request whose signal is already aborted without starting a thread', async () => {
    const controller = new AbortController();
    controller.abort();
    const pool = newPool(1);
    await expect(pool.request('echo', { text: 'x' }, { signal: controller.signal })).rejects.toBeInstanceOf(CancelledError);
    expect(pool.size).toBe(0);
    expect(engineActivity().liveThreads).toBe(0);
  });

  it('reports a thread that exits in the middle of a request with its exit code', async () => {
    const pool = newPool(1);
    await expect(pool.request('exit', { code: 3 })).rejects.toThrow('exited with code 3');
    expect(pool.size).toBe(0);
  });

  it('close rejects running and waiting requests with CancelledError and stops every thread', async () => {
    const pool = newPool(1);
    const watch = progressUntil(1);
    const running = pool.request('spin', {}, { onProgress: watch.onProgress });
    const waiting = pool.request('echo', { text: 'never' });
    const outcomes = Promise.allSettled([running, waiting]);
    await watch.reached;
    await pool.close();
    for (const outcome of await outcomes) {
      expect(outcome.status).toBe('rejected');
      expect((outcome as PromiseRejectedResult).reason).toBeInstanceOf(CancelledError);
    }
    await expect.poll(() => engineActivity().liveThreads, { timeout: 10_000 }).toBe(0);
    await expect(pool.request('echo', { text: 'late' })).rejects.toThrow('is closed');
  });
});
