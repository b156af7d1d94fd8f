/**
 * The host's end of a webview (extension/host/webviewLink.ts), which the dump/compare views and the trend
 * view share. There is no outside reference for this plumbing: the checks are the message contract of
 * extension/protocol/messages.ts (a webview that says `ready` gets the current state again; `selection`
 * is the host's to keep; requests get one response each) and the disposal rules in the module's comment.
 */
import { describe, expect, it } from 'vitest';
import { WebviewLink } from '../../extension/host/webviewLink';
import { FakeWebview } from './fakeVscode';

const LOADING = { status: 'loading', mode: 'single', label: 'fasteners.csv', fraction: null, message: 'Starting…' } as const;
const VANISHED = { status: 'vanished', path: 'runs/fasteners.csv' } as const;

/** Lets pending promise callbacks (the fake webview's postMessage, the request server) run. */
const settle = () => new Promise((resolve) => setImmediate(resolve));

describe('WebviewLink', () => {
  it('sends the current state to a webview that says ready, then calls onReady', async () => {
    const webview = new FakeWebview();
    const seen: string[] = [];
    const link = new WebviewLink(webview as never, LOADING, {} as never, {
      onReady: () => seen.push(`ready after ${webview.posted.length} posted`),
    });
    expect(webview.posted).toEqual([]); // nothing is pushed before the webview asks or the state changes
    link.setState(VANISHED);
    webview.incoming.fire({ kind: 'ready' });
    await settle();
    expect(webview.states()).toEqual([VANISHED, VANISHED]);
    expect(link.state).toEqual(VANISHED);
    expect(seen).toEqual(['ready after 2 posted']);
  });

  it('hands the selection to onSelection and posts nothing for it', async () => {
    const webview = new FakeWebview();
    const selected: (string | null)[] = [];
    new WebviewLink(webview as never, LOADING, {} as never, { onSelection: (q) => selected.push(q) });
    webview.incoming.fire({ kind: 'selection', query: 'wood screws 4x40' });
    webview.incoming.fire({ kind: 'selection', query: null });
    await settle();
    expect(selected).toEqual(['wood screws 4x40', null]);
    expect(webview.posted).toEqual([]);
  });

  it('answers each request once through the handlers', async () => {
    const webview = new FakeWebview();
    new WebviewLink(webview as never, LOADING, { queryPage: async (p: { offset: number }) => ({ total: 7, offset: p.offset }) } as never);
    webview.incoming.fire({ kind: 'request', id: 3, method: 'queryPage', params: { offset: 2 } });
    await settle();
    expect(webview.posted).toEqual([{ kind: 'response', id: 3, ok: true, result: { total: 7, offset: 2 } }]);
  });

  it('once disposed: posts nothing, cancels the requests being answered and stops listening', async () => {
    const webview = new FakeWebview();
    let finish: (v: unknown) => void = () => undefined;
    let signal: AbortSignal | undefined;
    let asked = 0;
    const link = new WebviewLink(webview as never, LOADING, {
      queryDetail: (_p: unknown, ctx: { signal: AbortSignal }) => {
        asked++;
        signal = ctx.signal;
        return new Promise((resolve) => (finish = resolve));
      },
    } as never);
    webview.incoming.fire({ kind: 'request', id: 1, method: 'queryDetail', params: {} });
    await settle();
    link.dispose();
    expect(signal?.aborted).toBe(true);
    finish({ late: true });
    link.setState(VANISHED);
    expect(await link.post({ kind: 'showSummary' })).toBe(false);
    webview.incoming.fire({ kind: 'request', id: 2, method: 'queryDetail', params: {} });
    webview.incoming.fire({ kind: 'ready' });
    await settle();
    expect(asked).toBe(1);
    expect(webview.posted).toEqual([]);
    link.dispose(); // a second dispose is harmless
  });

  it('a webview that refuses a message (panel closing) gives false, not a rejection', async () => {
    const webview = new FakeWebview();
    webview.postMessage = () => Promise.reject(new Error('Webview is disposed'));
    const link = new WebviewLink(webview as never, LOADING, {} as never);
    expect(await link.post({ kind: 'showSummary' })).toBe(false);
  });
});
