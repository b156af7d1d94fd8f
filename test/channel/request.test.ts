import { afterEach, describe, expect, it, vi } from 'vitest';
import {
  ChannelClosedError,
  RemoteError,
  RequestAbortedError,
  RequestClient,
  RequestServer,
  RequestTimeoutError,
  type RequestEnvelope,
  type ResponseEnvelope,
} from '../../extension/channel/request';

type TestMap = {
  double: { params: { n: number }; result: number };
  fail: { params: { why: string }; result: never };
  slow: { params: { ms: number }; result: string };
  refuse: { params: { line: number }; result: never };
};

/** Client and server wired back to back; `deliver` can be swapped to reorder or drop messages. */
function pair(timeoutMs = 1000) {
  const sentToServer: unknown[] = [];
  const sentToClient: ResponseEnvelope[] = [];
  const client = new RequestClient<TestMap>((m) => {
    sentToServer.push(m);
    server.handleMessage(m);
  }, timeoutMs);
  const aborted: number[] = [];
  const server = new RequestServer<TestMap>(
    {
      double: ({ n }) => n * 2,
      fail: ({ why }) => {
        class InputError extends Error {
          override name = 'InputError';
        }
        throw new InputError(why);
      },
      refuse: ({ line }) => {
        class ShelfError extends Error {
          override name = 'ShelfError';
          readonly file = 'stock.tsv';
          readonly line = line;
          readonly shelves = [1, 2];
        }
        throw new ShelfError(`stock.tsv:${line}: expected a shelf`);
      },
      slow: ({ ms }, { signal, id }) =>
        new Promise((resolve) => {
          const t = setTimeout(() => resolve(`done ${ms}`), ms);
          signal.addEventListener('abort', () => {
            clearTimeout(t);
            aborted.push(id);
          });
        }),
    },
    (m) => {
      sentToClient.push(m);
      client.handleMessage(m);
    },
  );
  return { client, server, sentToServer, sentToClient, aborted };
}

afterEach(() => {
  vi.useRealTimers();
});

describe('RequestClient / RequestServer', () => {
  it('resolves a request with the handler result', async () => {
    const { client } = pair();
    await expect(client.request('double', { n: 21 })).resolves.toBe(42);
    expect(client.pendingCount).toBe(0);
  });

  it('rejects with the remote message and keeps the remote error name', async () => {
    const { client } = pair();
    const error = await client.request('fail', { why: "run.csv:3: expected a number in column 'score'" }).catch((e) => e);
    expect(error).toBeInstanceOf(RemoteError);
    expect(error.message).toBe("run.csv:3: expected a number in column 'score'");
    expect(error.remoteName).toBe('InputError');
  });

  it("carries the error's own string and number fields, and only those", async () => {
    const { client, sentToClient } = pair();
    const error = await client.request('refuse', { line: 7 }).catch((e) => e);
    expect(error).toBeInstanceOf(RemoteError);
    expect(error.message).toBe('stock.tsv:7: expected a shelf');
    expect(error.remoteName).toBe('ShelfError');
    expect(error.fields).toEqual({ file: 'stock.tsv', line: 7 });
    // An error without such fields sends none: the envelope stays { name, message }.
    await client.request('fail', { why: 'no' }).catch(() => undefined);
    expect(sentToClient.at(-1)).toEqual({ kind: 'response', id: 2, ok: false, error: { name: 'InputError', message: 'no' } });
  });

  it('rejects an unknown method instead of hanging', async () => {
    const { client } = pair();
    // Casting around the types on purpose: a peer built from an older protocol could send this.
    const error = (await (client as unknown as RequestClient<Record<string, { params: unknown; result: unknown }>>)
      .request('nope', {})
      .catch((e: RemoteError) => e)) as RemoteError;
    expect(error).toBeInstanceOf(RemoteError);
    expect(error.message).toContain("unknown method 'nope'");
  });

  it('times out, sends a cancel, and ignores the late answer', async () => {
    vi.useFakeTimers();
    const { client, sentToServer, aborted } = pair(50);
    const promise = client.request('slow', { ms: 500 });
    const settled = promise.catch((e) => e);
    await vi.advanceTimersByTimeAsync(60);
    const error = await settled;
    expect(error).toBeInstanceOf(RequestTimeoutError);
    expect(error.message).toContain("'slow'");
    expect(sentToServer.at(-1)).toEqual({ kind: 'cancel', id: 1 });
    expect(aborted).toEqual([1]);
    await vi.advanceTimersByTimeAsync(600);
    expect(client.pendingCount).toBe(0);
  });

  it('per-request timeout overrides the default', async () => {
    vi.useFakeTimers();
    const { client } = pair(10);
    const promise = client.request('slow', { ms: 30 }, { timeoutMs: 100 });
    await vi.advanceTimersByTimeAsync(40);
    await expect(promise).resolves.toBe('done 30');
  });

  it('matches out-of-order responses to their requests by id', async () => {
    const posted: RequestEnvelope[] = [];
    const client = new RequestClient<TestMap>((m) => {
      if (m.kind === 'request') posted.push(m as RequestEnvelope);
    });
    const first = client.request('double', { n: 1 });
    const second = client.request('double', { n: 2 });
    const third = client.request('double', { n: 3 });
    const [a, b, c] = posted;
    // Answer in reverse order, with a stray unknown id in between.
    client.handleMessage({ kind: 'response', id: c!.id, ok: true, result: 'third' });
    client.handleMessage({ kind: 'response', id: 999, ok: true, result: 'stray' });
    client.handleMessage({ kind: 'response', id: a!.id, ok: true, result: 'first' });
    client.handleMessage({ kind: 'response', id: b!.id, ok: false, error: { name: 'Error', message: 'second failed' } });
    await expect(first).resolves.toBe('first');
    await expect(second).rejects.toThrow('second failed');
    await expect(third).resolves.toBe('third');
    expect(new Set(posted.map((p) => p.id)).size).toBe(3);
  });

  it('dispose rejects every pending request and refuses new ones', async () => {
    const client = new RequestClient<TestMap>(() => {});
    const p1 = client.request('double', { n: 1 }).catch((e) => e);
    const p2 = client.request('slow', { ms: 1 }).catch((e) => e);
    expect(client.pendingCount).toBe(2);
    client.dispose('panel closed');
    for (const e of await Promise.all([p1, p2])) {
      expect(e).toBeInstanceOf(ChannelClosedError);
      expect(e.message).toBe('panel closed');
    }
    await expect(client.request('double', { n: 1 })).rejects.toBeInstanceOf(ChannelClosedError);
    expect(client.pendingCount).toBe(0);
  });

  it('an AbortSignal rejects at once and cancels on the serving side', async () => {
    vi.useFakeTimers();
    const { client, aborted, sentToClient } = pair();
    const controller = new AbortController();
    const promise = client.request('slow', { ms: 10_000 }, { signal: controller.signal }).catch((e) => e);
    controller.abort();
    expect(await promise).toBeInstanceOf(RequestAbortedError);
    expect(aborted).toEqual([1]);
    // The server never answers an aborted request, not even once the handler's own time is up.
    await vi.advanceTimersByTimeAsync(20_000);
    expect(sentToClient).toHaveLength(0);
  });

  it('a request whose transport throws rejects instead of hanging', async () => {
    const client = new RequestClient<TestMap>(() => {
      throw new Error('webview is disposed');
    });
    await expect(client.request('double', { n: 1 })).rejects.toThrow('webview is disposed');
    expect(client.pendingCount).toBe(0);
  });

  it('server dispose aborts running handlers without answering', async () => {
    const { client, server, aborted } = pair();
    const promise = client.request('slow', { ms: 10_000 });
    server.dispose();
    expect(aborted).toEqual([1]);
    client.dispose();
    await expect(promise).rejects.toBeInstanceOf(ChannelClosedError);
  });

  it('ignores messages that are not envelopes', () => {
    const { client, server } = pair();
    expect(client.handleMessage({ kind: 'state' })).toBe(false);
    expect(client.handleMessage(null)).toBe(false);
    expect(server.handleMessage({ kind: 'ready' })).toBe(false);
    expect(server.handleMessage('request')).toBe(false);
  });
});
