/**
 * A view session end to end in plain Node: fake `vscode` (test/host/fakeVscode.ts), the real worker
 * thread bundled from source. Checks the state flow the webview relies on: loading → loaded, requests
 * answered, live reload after a file change (reloaded, selection kept), vanished, errors, cancel, reveal.
 */
import { mkdirSync, mkdtempSync, unlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { shared, memento, FakeWebview, Uri } from './fakeVscode';
import { groupedDump } from '../engine/fixtures/streamFiles';
import { bundleEngineWorker } from '../worker/support/workers';

vi.mock('vscode', async () => (await import('./fakeVscode')).shared.api);

const { ViewSession } = await import('../../extension/host/viewSession');
const { EngineWorker } = await import('../../extension/host/workerHost');
const { readConfig } = await import('../../extension/host/config');

const dir = mkdtempSync(join(tmpdir(), 'gainline-session-'));
/** The engine worker bundled from source (beforeAll). */
let script = '';
let worker: InstanceType<typeof EngineWorker>;

// "cordless drill 18v": grades by score order 1, 0 → NDCG@10 = 1 (hand-derived: the only relevant item is first).
// After the rewrite the order is 0, 1 → DCG = 1/log2(3), ideal 1 → NDCG = 0.6309 (Järvelin & Kekäläinen 2002).
const GOOD = 'query_id,item_id,label,score\ncordless drill 18v,drill-a,1,0.9\ncordless drill 18v,drill-b,0,0.1\n';
const WORSE = 'query_id,item_id,label,score\ncordless drill 18v,drill-a,1,0.1\ncordless drill 18v,drill-b,0,0.9\n';

beforeAll(async () => {
  script = await bundleEngineWorker(dir);
  worker = new EngineWorker(script);
});
afterAll(() => worker?.dispose());

function open(file: string, notificationDelayMs?: number, settings: Record<string, unknown> = {}) {
  const webview = new FakeWebview();
  const session = new ViewSession(webview as never, { mode: 'single', uri: Uri.file(file) as never }, {
    worker,
    getConfig: () => readConfig((key) => settings[key]),
    memory: memento() as never,
    ...(notificationDelayMs !== undefined ? { notificationDelayMs } : {}),
  });
  const watcher = shared.state.watchers.at(-1)!;
  return { webview, session, watcher };
}

async function until(check: () => boolean, what: string, ms = 10_000): Promise<void> {
  const end = Date.now() + ms;
  while (!check()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 10));
  }
}

/** Sends a request envelope as the webview would and waits for its response. */
async function ask(webview: FakeWebview, id: number, method: string, params: unknown): Promise<any> {
  webview.incoming.fire({ kind: 'request', id, method, params });
  await until(() => webview.posted.some((m) => m.kind === 'response' && m.id === id), `response ${id}`);
  return webview.posted.find((m) => m.kind === 'response' && m.id === id);
}

describe('ViewSession', () => {
  it('shows a dump over gainline.reading.streamFromMegabytes partially while it streams in, then the full overview', async () => {
    // Two folders down: tables that other tests leave in sibling temp folders are not near enough to be joined.
    mkdirSync(join(dir, 'nightly', 'streamed'), { recursive: true });
    const file = join(dir, 'nightly', 'streamed', 'streamed.tsv');
    writeFileSync(file, groupedDump(61, { queries: 20_000, maxRows: 20, segments: true }));
    const { webview, session } = open(file, 10_000, { 'reading.streamFromMegabytes': 1 });
    await session.start();
    const states = webview.states();
    const partials = states.filter((st) => st.status === 'loading' && st.partial).map((st) => st.partial);
    // About 3 MB in blocks of 1 MB (worker/streamSession.ts editorBlockBytes): a partial overview per block.
    expect(partials.length).toBeGreaterThanOrEqual(2);
    expect(partials.at(-1).bytesRead).toBeGreaterThan(partials[0].bytesRead);
    const last = states.at(-1);
    expect(last).toMatchObject({ status: 'loaded', mode: 'single' });
    expect(states.findIndex((st) => st.status === 'loading' && st.partial)).toBeLessThan(states.length - 1);
    expect(last.overview.warnings.some((w: string) => w.startsWith('Streamed:'))).toBe(true);
    expect(partials[0].metrics[0].counted).toBeLessThan(last.overview.metrics[0].counted);
    session.dispose();
  });

  it('loads, answers pages, reloads after a change keeping the selection, then reports the file vanished', async () => {
    const file = join(dir, 'live.csv');
    writeFileSync(file, GOOD);
    const shownBefore = shared.state.progressShown.length;
    const { webview, session, watcher } = open(file, 10_000);
    await session.start();
    // A read quicker than the delay shows progress in the window only: no notification flashing up.
    expect(shared.state.progressShown.slice(shownBefore)).toEqual([10]);
    const states = webview.states();
    expect(states[0]).toMatchObject({ status: 'loading', mode: 'single' });
    expect(states.at(-1)).toMatchObject({ status: 'loaded', mode: 'single' });
    expect(states.at(-1).overview.metrics[0].mean).toBe(1);

    // The webview (re)starts and asks for the current state.
    webview.incoming.fire({ kind: 'ready' });
    await until(() => webview.states().length > states.length, 'state after ready');
    expect(webview.states().at(-1).status).toBe('loaded');

    const page = await ask(webview, 1, 'queryPage', { offset: 0, limit: 10 });
    expect(page).toMatchObject({ ok: true, result: { total: 1, rows: [{ query: 'cordless drill 18v' }] } });
    webview.incoming.fire({ kind: 'selection', query: 'cordless drill 18v' });

    // Rewrite the file: one debounced recompute however many change events arrive. The debounce
    // runs on a fake clock: five events leave one timer, and firing it asks the worker once.
    writeFileSync(file, WORSE);
    const before = webview.states().length;
    const workerCalls = vi.spyOn(worker, 'call');
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout'] });
    try {
      for (let i = 0; i < 5; i++) watcher.change.fire(Uri.file(file));
      expect(vi.getTimerCount()).toBe(1);
      vi.runOnlyPendingTimers();
    } finally {
      // The worker answers on the real event loop; timers started by the load stay on the fake clock.
      vi.useRealTimers();
    }
    await until(() => webview.states().slice(before).some((s) => s.status === 'reloaded'), 'reloaded');
    expect(workerCalls.mock.calls.filter(([method]) => method === 'load')).toHaveLength(1);
    workerCalls.mockRestore();
    const after = webview.states().slice(before);
    expect(after.filter((s) => s.status === 'reloaded')).toHaveLength(1);
    expect(after.some((s) => s.status === 'loading')).toBe(false); // no flash of the loading screen
    expect(after.at(-1).overview.metrics[0].mean).toBeCloseTo(1 / Math.log2(3), 10);
    expect(session.selection).toBe('cordless drill 18v');
    expect(session.headline).toMatchObject({ label: 'NDCG@10', queries: 1 });

    unlinkSync(file);
    watcher.remove.fire(Uri.file(file));
    expect(webview.states().at(-1)).toEqual({ status: 'vanished', path: file });
    expect(session.headline).toBeUndefined();
    session.dispose();
    expect(watcher.disposed).toBe(true);
  });

  it('after the worker thread dies, the next request reads the file again instead of failing', async () => {
    const file = join(dir, 'crash.csv');
    writeFileSync(file, GOOD);
    const { webview, session } = open(file);
    await session.start();
    const generation = worker.generation;
    // Kill the thread from outside, as a crash would.
    await (worker as unknown as { worker: { terminate(): Promise<number> } }).worker.terminate();
    await until(() => !worker.running, 'worker stopped');
    // Two requests at once after the crash: both answered, from one re-read.
    const spy = vi.spyOn(worker, 'call');
    const [page, detail] = await Promise.all([
      ask(webview, 21, 'queryPage', { offset: 0, limit: 5 }),
      ask(webview, 22, 'queryDetail', { query: 'cordless drill 18v' }),
    ]);
    expect(page).toMatchObject({ ok: true, result: { total: 1 } });
    expect(detail).toMatchObject({ ok: true, result: { query: 'cordless drill 18v' } });
    expect(spy.mock.calls.filter(([method]) => method === 'load')).toHaveLength(1);
    spy.mockRestore();
    expect(worker.generation).toBe(generation + 1);
    session.dispose();
  });

  it('shows a reader error as one line', async () => {
    const file = join(dir, 'broken.csv');
    writeFileSync(file, 'query_id,item_id,label,score\nhammer,h1,1,not-a-number\n');
    const { webview, session } = open(file);
    await session.start();
    const last = webview.states().at(-1);
    expect(last.status).toBe('error');
    expect(last.message).toContain('broken.csv');
    expect(last.message).not.toContain('\n');
    session.dispose();
  });

  it('Cancel in the progress notification ends in a clear state, not a hang', async () => {
    const file = join(dir, 'cancel.csv');
    writeFileSync(file, GOOD);
    shared.state.cancelNextProgress = true;
    const { webview, session } = open(file, 0);
    await session.start();
    const last = webview.states().at(-1);
    expect(last.status).toBe('error');
    expect(last.message).toContain('cancelled');
    session.dispose();
  });

  it('reveals a row at its line, and explains when the file has no lines', async () => {
    const file = join(dir, 'reveal.csv');
    writeFileSync(file, GOOD);
    const { webview, session } = open(file);
    await session.start();
    const detail = await ask(webview, 7, 'queryDetail', { query: 'cordless drill 18v' });
    const second = detail.result.positions[1];
    const revealed = await ask(webview, 8, 'revealRow', { row: second.row });
    expect(revealed.result).toEqual({ revealed: true, line: 3 });
    expect(shared.state.shownDocuments.at(-1)).toMatchObject({ file, selection: { start: { line: 2 } } });
    // Opened in a new group below the viewer, so the viewer keeps its width.
    expect(shared.state.executed.at(-1)?.id).toBe('workbench.action.newGroupBelow');
    const failed = await ask(webview, 9, 'queryDetail', { query: 'no such query' });
    expect(failed.ok).toBe(false);
    expect(failed.error.message).toContain('no such query');
    await ask(webview, 10, 'copyQueryJson', { query: 'cordless drill 18v' });
    expect(JSON.parse(shared.state.clipboard).query).toBe('cordless drill 18v');
    session.dispose();
  });
});
