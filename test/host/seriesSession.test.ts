/**
 * A trend view end to end in plain Node: fake `vscode` (fakeVscode.ts), the real engine worker and
 * checkpoint worker bundled from source. The editor's series equals `gainline trend --format json` on
 * the same files (dist/cli.js, itself checked against `gainline eval` of each checkpoint in
 * test/engine/trend.test.ts). Live growth: watcher events are debounced (fake clock, no sleeps); a
 * half-written checkpoint is listed as unread without disturbing the others and is read once complete;
 * only the new file is read when the series grows.
 */
import { appendFileSync, mkdtempSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import * as esbuild from 'esbuild';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { shared, memento, FakeWebview } from './fakeVscode';
import { runCli } from '../cli/support/runCli';

vi.mock('vscode', async () => (await import('./fakeVscode')).shared.api);

const { SeriesSession } = await import('../../extension/host/seriesSession');
const { groupSeries } = await import('../../extension/host/seriesGroups');
const { EngineWorker } = await import('../../extension/host/workerHost');
const { readConfig } = await import('../../extension/host/config');

const bundles = mkdtempSync(join(tmpdir(), 'gainline-series-bundle-'));
const folder = mkdtempSync(join(tmpdir(), 'gainline-series-'));
let worker: InstanceType<typeof EngineWorker>;

const NAMES = ['cordless drill 18v', 'wood screws 4x40', 'hex key set', 'paint roller 9in', 'tile spacers 3mm'];

/** 20 queries × 5 items; `skill` moves relevant items up. Seeded, so every run writes the same files. */
function checkpoint(seed: number, skill: number): string {
  let state = seed;
  const random = () => ((state = (Math.imul(state, 1103515245) + 12345) >>> 0) / 2 ** 32);
  const lines = ['query,product_id,grade,score'];
  for (let q = 0; q < 20; q++) {
    for (let i = 0; i < 5; i++) {
      const grade = (q + 2 * i) % 5 === 0 ? 2 : i % 3 === 1 ? 1 : 0;
      lines.push(`${NAMES[q % NAMES.length]} #${q},p${i},${grade},${(random() + (q % 3 === 0 ? -1 : 1) * skill * grade).toFixed(6)}`);
    }
  }
  return lines.join('\n') + '\n';
}

const SETTINGS = { metrics: ['ndcg@5', 'err@5', 'rr'] };
const config = () => readConfig((key) => (SETTINGS as Record<string, unknown>)[key]);

beforeAll(async () => {
  for (const entry of ['extension/worker/engineWorker.ts', 'extension/engine/threads/checkpointWorker.ts']) {
    const name = entry.replace(/^.*\/|\.ts$/g, '');
    await esbuild.build({ entryPoints: [entry], outfile: join(bundles, `${name}.js`), bundle: true, platform: 'node', format: 'cjs', target: 'es2022', logLevel: 'error', external: ['@duckdb/node-api'] });
  }
  worker = new EngineWorker(join(bundles, 'engineWorker.js'));
  writeFileSync(join(folder, 'epoch-2.csv'), checkpoint(2, 0.3));
  writeFileSync(join(folder, 'epoch-10.csv'), checkpoint(10, 0.5));
  writeFileSync(join(folder, 'epoch-1.csv'), checkpoint(1, 0));
}, 60_000);
afterAll(() => worker?.dispose());

function open() {
  const webview = new FakeWebview();
  const resolve = async () => groupSeries(readdirSync(folder).map((n) => ({ path: join(folder, n), relative: `run-7/${n}` })), [], 'number')[0];
  const opened: string[] = [];
  const compared: string[][] = [];
  const session = new SeriesSession(webview as never, 'run-7/', {
    worker, getConfig: config, memory: memento() as never, resolve, watchPattern: folder,
    openCheckpoint: (uri) => opened.push(uri.fsPath), openCompare: (a, b) => compared.push([a.fsPath, b.fsPath]),
  }, 'folder:run-7');
  return { webview, session, watcher: shared.state.watchers.at(-1)!, opened, compared };
}

async function until(check: () => boolean, what: string, ms = 30_000): Promise<void> {
  const end = Date.now() + ms;
  while (!check()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 10));
  }
}

/** The CLI's trend of the folder, as the reference for every value the view shows. */
function cliTrend(): any {
  const r = runCli(['trend', folder, '--metrics', SETTINGS.metrics.join(','), '--format', 'json'], folder);
  expect(r.stderr).toBe('');
  return JSON.parse(r.stdout);
}

function expectSameAsCli(series: any): void {
  const cli = cliTrend();
  expect(series.checkpoints.map((c: any) => c.run)).toEqual(cli.runs.map((r: any) => r.run.replace(/^.*\//, '')));
  series.checkpoints.forEach((c: any, k: number) => {
    SETTINGS.metrics.forEach((key, m) => {
      expect(c.means[m]).toBe(cli.runs[k].summary[key]);
      expect([c.lower[m], c.upper[m]]).toEqual([cli.runs[k].interval95[key].low, cli.runs[k].interval95[key].high]);
    });
  });
  SETTINGS.metrics.forEach((key, m) => expect(series.peaks[m]).toBe(cli.peaks[key].index));
  expect(series.worstFirstToLast.map((d: any) => [d.query, d.delta])).toEqual(cli.worstFirstToLast.map((d: any) => [d.query, d.delta]));
  expect(series.worstPeakToLast.map((d: any) => [d.query, d.delta])).toEqual(cli.worstPeakToLast.map((d: any) => [d.query, d.delta]));
}

describe('a training series in a trend view', () => {
  it('shows the command line’s trend, opens checkpoints and compares two', async () => {
    const { webview, session, opened, compared } = open();
    await session.start();
    const state = webview.states().at(-1);
    expect(state.status).toBe('loaded');
    // The page saves the key, so the panel comes back after a window reload (extension.ts, PanelRestorer).
    expect(state.seriesKey).toBe('folder:run-7');
    expect(state.series.checkpoints.map((c: any) => c.run)).toEqual(['epoch-1.csv', 'epoch-2.csv', 'epoch-10.csv']);
    expectSameAsCli(state.series);
    webview.incoming.fire({ kind: 'request', id: 1, method: 'openCheckpoint', params: { path: join(folder, 'epoch-2.csv') } });
    webview.incoming.fire({ kind: 'request', id: 2, method: 'compareCheckpoints', params: { base: join(folder, 'epoch-1.csv'), other: join(folder, 'epoch-10.csv') } });
    webview.incoming.fire({ kind: 'request', id: 3, method: 'openCheckpoint', params: { path: '/etc/passwd' } });
    webview.incoming.fire({ kind: 'request', id: 4, method: 'seriesTrajectory', params: { query: 'hex key set #2' } });
    await until(() => webview.posted.filter((m) => m.kind === 'response').length === 4, 'four answers');
    expect(opened).toEqual([join(folder, 'epoch-2.csv')]);
    expect(compared).toEqual([[join(folder, 'epoch-1.csv'), join(folder, 'epoch-10.csv')]]);
    const answer = (id: number) => webview.posted.find((m) => m.kind === 'response' && m.id === id);
    expect(answer(3).ok).toBe(false);
    const cli = cliTrend();
    const q = cli.perQuery.query.indexOf('hex key set #2');
    expect(answer(4).result.values[0]).toEqual(cli.perQuery.values['ndcg@5'][q]);
    session.dispose();
  }, 60_000);

  it('grows live: debounced, a half-written checkpoint unread, then read once complete', async () => {
    const { webview, session, watcher } = open();
    await session.start();
    expect(session.loads).toBe(1);
    const full = checkpoint(20, 0.45);
    const cut = full.indexOf('\n', full.length / 2) + 12; // mid-record: the last row lacks its score
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout'] });
    try {
      writeFileSync(join(folder, 'epoch-20.csv'), full.slice(0, cut));
      watcher.create.fire(undefined as never);
      await vi.advanceTimersByTimeAsync(250);
      watcher.change.fire(undefined as never); // the writer touches the file again: the wait starts over
      await vi.advanceTimersByTimeAsync(250);
      expect(session.loads).toBe(1);
      await vi.advanceTimersByTimeAsync(50);
      expect(session.loads).toBe(2);
    } finally {
      vi.useRealTimers();
    }
    await until(() => webview.states().at(-1).status === 'reloaded', 'the series read with its half-written checkpoint');
    let series = webview.states().at(-1).series;
    expect(series.checkpoints.map((c: any) => c.run)).toEqual(['epoch-1.csv', 'epoch-2.csv', 'epoch-10.csv']);
    expect(series.unread.map((u: any) => u.run)).toEqual(['epoch-20.csv']);
    expect(series.unread[0].message).toMatch(/epoch-20\.csv:\d+: expected/);
    expect(series.scoredNow).toBe(1); // the three complete checkpoints were kept, not read again
    const posted = webview.states().length;
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout'] });
    try {
      appendFileSync(join(folder, 'epoch-20.csv'), full.slice(cut));
      watcher.change.fire(undefined as never);
      await vi.advanceTimersByTimeAsync(300);
      expect(session.loads).toBe(3);
    } finally {
      vi.useRealTimers();
    }
    await until(() => webview.states().length > posted, 'the grown series');
    series = webview.states().at(-1).series;
    expect(webview.states().at(-1).status).toBe('reloaded');
    expect(series.unread).toEqual([]);
    expect(series.checkpoints.map((c: any) => c.run)).toEqual(['epoch-1.csv', 'epoch-2.csv', 'epoch-10.csv', 'epoch-20.csv']);
    expect(series.scoredNow).toBe(1);
    expectSameAsCli(series);
    session.dispose();
  }, 60_000);
});
