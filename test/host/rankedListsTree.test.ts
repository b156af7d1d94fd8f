/** The Ranked Lists view: lazy headlines, cached by modification time, large files left alone. */
import { mkdtempSync, truncateSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it, vi } from 'vitest';
import { MAX_LISTED_DUMPS, RANKED_LISTS_SHOWN } from '../../extension/host/dumpListing';
import { memento, shared, Uri } from './fakeVscode';

vi.mock('vscode', async () => (await import('./fakeVscode')).shared.api);

const { RankedListsTree } = await import('../../extension/host/rankedListsTree');
const { readConfig } = await import('../../extension/host/config');
const { RequestAbortedError } = await import('../../extension/channel/request');
const { RunsTree } = await import('../../extension/host/runsTree');

const dir = mkdtempSync(join(tmpdir(), 'gainline-tree-'));

/**
 * The tree once no headline is pending: waits for the tree's own change events (one per computed
 * headline) rather than for a stretch of time, so "not read again" below is a fact, not a race.
 */
async function settled(tree: InstanceType<typeof RankedListsTree>) {
  for (;;) {
    // Listen before asking, so a headline that lands while getChildren runs is not missed.
    let stop = () => {};
    const refreshed = new Promise<void>((resolve) => {
      const listener = tree.onDidChangeTreeData(() => resolve());
      stop = () => listener.dispose();
    });
    const items = await tree.getChildren();
    if (!items.some((i) => i.description === PENDING)) {
      stop();
      return items;
    }
    await refreshed;
    stop();
  }
}

const PENDING = '…';

describe('RankedListsTree', () => {
  it('shows a placeholder, then the headline; recomputes only when the file changes', async () => {
    const small = join(dir, 'model-a.csv');
    const large = join(dir, 'huge.csv');
    writeFileSync(small, 'query_id,item_id,label,score\nhammer,h1,1,0.5\n');
    writeFileSync(large, '');
    truncateSync(large, 300 * 2 ** 20); // sparse: no disk used
    shared.state.workspaceFiles = [Uri.file(small), Uri.file(large)];
    const call = vi.fn(async () => ({ key: 'ndcg@10', label: 'NDCG@10', mean: 0.61234, queryCount: 1, rowCount: 1 }));
    const tree = new RankedListsTree({ call } as never, () => readConfig(() => undefined), memento() as never);

    const first = await tree.getChildren();
    expect(first.map((i) => i.label)).toEqual(['huge.csv', 'model-a.csv'].sort());
    expect(first.find((i) => i.label === 'model-a.csv')!.description).toBe(PENDING);

    let items = await settled(tree);
    expect(items.find((i) => i.label === 'model-a.csv')!.description).toBe('NDCG@10 0.6123');
    expect(items.find((i) => i.label === 'huge.csv')!.description).toContain('open to compute');
    expect(call).toHaveBeenCalledTimes(1); // the large file was never read

    // Unchanged file: cached (shown at once, nothing queued, so nothing can be read later).
    // Touched file: computed again.
    items = await tree.getChildren();
    expect(items.find((i) => i.label === 'model-a.csv')!.description).toBe('NDCG@10 0.6123');
    expect(call).toHaveBeenCalledTimes(1);
    utimesSync(small, new Date(), new Date(Date.now() + 5000));
    expect((await tree.getChildren()).find((i) => i.label === 'model-a.csv')!.description).toBe(PENDING);
    items = await settled(tree);
    expect(call).toHaveBeenCalledTimes(2);
    expect(items.find((i) => i.label === 'model-a.csv')!.command).toMatchObject({ command: 'vscode.openWith' });
    tree.dispose();
  });

  it('shows why a file could not be read', async () => {
    const file = join(dir, 'search-log.tsv');
    writeFileSync(file, 'id\tquery\n');
    shared.state.workspaceFiles = [Uri.file(file)];
    const call = vi.fn(async () => {
      throw new Error('search-log.tsv: expected a column for the item id');
    });
    const tree = new RankedListsTree({ call } as never, () => readConfig(() => undefined), memento() as never);
    const [item] = await settled(tree);
    expect(item!.description).toContain('not readable');
    expect(item!.tooltip).toContain('expected a column for the item id');
    tree.dispose();
  });

  it('leaves queries and items tables out: they are read with the dumps, not on their own', async () => {
    const dump = join(dir, 'run.csv');
    writeFileSync(dump, 'query,item,label,score\nq1,SKU-1,1,0.5\n');
    shared.state.workspaceFiles = [Uri.file(join(dir, 'queries.tsv')), Uri.file(dump), Uri.file(join(dir, 'items.parquet'))];
    const tree = new RankedListsTree({ call: vi.fn(async () => ({ key: 'ndcg@10', label: 'NDCG@10', mean: 1, queryCount: 1, rowCount: 1 })) } as never,
      () => readConfig(() => undefined), memento() as never);
    expect((await tree.listFiles()).map((u) => u.fsPath)).toEqual([dump]);
    tree.dispose();
  });
});

describe('background headlines and a view\'s first screen (foreground.ts)', () => {
  it('waits while a first screen is computed, and reads again a headline it stopped for one', async () => {
    const { ForegroundWork } = await import('../../extension/host/foreground');
    const file = join(dir, 'model-b.csv');
    writeFileSync(file, 'query_id,item_id,label,score\nhex key set,k1,1,0.5\n');
    shared.state.workspaceFiles = [Uri.file(file)];
    const foreground = new ForegroundWork();
    const calls: string[] = [];
    let startedFirst!: () => void;
    const firstStarted = new Promise<void>((resolve) => (startedFirst = resolve));
    // The first call hangs until it is aborted (as the worker's read is, by the view's hold); the next answers.
    const call = vi.fn((_method: string, _params: unknown, options: { signal?: AbortSignal }) => {
      calls.push(foreground.busy ? 'while held' : 'free');
      if (calls.length > 1) return Promise.resolve({ key: 'ndcg@10', label: 'NDCG@10', mean: 0.5, queryCount: 1, rowCount: 1 });
      startedFirst();
      return new Promise((_resolve, reject) => options.signal!.addEventListener('abort', () => reject(new RequestAbortedError('headline'))));
    });
    const lines: string[] = [];
    const tree = new RankedListsTree({ call } as never, () => readConfig(() => undefined), memento() as never, foreground, (line) => lines.push(line));
    await tree.getChildren();
    await firstStarted;
    const release = foreground.hold();
    // Stopped, not failed, and not asked again while held: the placeholder stays.
    await vi.waitFor(() => expect(lines.some((l) => /stopped for a view's first screen/.test(l))).toBe(true));
    expect((await tree.getChildren())[0]!.description).toBe(PENDING);
    expect(calls).toEqual(['free']);
    release();
    const items = await settled(tree);
    expect(items[0]!.description).toBe('NDCG@10 0.5000');
    expect(calls).toEqual(['free', 'free']);
    expect(lines.at(-1)).toMatch(/^background headline of model-b\.csv: \d+ ms \(epoch ms \d+ to \d+\)$/);
    tree.dispose();
  });

  it('counts holds: idle only when every first screen is out, and a release twice counts once', async () => {
    const { ForegroundWork } = await import('../../extension/host/foreground');
    const work = new ForegroundWork();
    const seen: string[] = [];
    work.onHold(() => seen.push('hold'));
    const a = work.hold();
    const b = work.hold();
    let idle = false;
    const waiting = work.idle().then(() => (idle = true));
    a();
    a();
    await Promise.resolve();
    expect([work.busy, idle]).toEqual([true, false]);
    b();
    await waiting;
    expect([work.busy, idle, seen]).toEqual([false, true, ['hold', 'hold']]);
  });
});

describe('many dumps: the Ranked Lists view shows the first 500 and counts the rest; the Runs view groups them all', () => {
  // Paths only: a file that is not there is a headline that fails, which these checks do not look at.
  const checkpoints = (n: number) => Array.from({ length: n }, (_, i) => Uri.file(join(dir, 'job', `step-${String(i).padStart(5, '0')}.csv`)));
  const headline = async () => ({ key: 'ndcg@10', label: 'NDCG@10', mean: 0.5, queryCount: 1, rowCount: 1 });

  it('700 dumps: 500 rows and one saying 200 more; listFiles and the Runs view have all 700', async () => {
    shared.state.workspaceFiles = checkpoints(700);
    const tree = new RankedListsTree({ call: vi.fn(headline) } as never, () => readConfig(() => undefined), memento() as never);
    const rows = await tree.getChildren();
    expect(rows).toHaveLength(RANKED_LISTS_SHOWN + 1);
    expect(rows.slice(0, RANKED_LISTS_SHOWN).every((r) => r.resourceUri !== undefined)).toBe(true);
    expect(rows.at(-1)!.label).toBe('200 more dumps not listed');
    expect(rows.at(-1)!.command).toBeUndefined();
    expect(await tree.listFiles()).toHaveLength(700);
    const runs = new RunsTree(() => tree.listing(), () => readConfig(() => undefined));
    const [series, ...rest] = await runs.getChildren();
    expect(rest).toEqual([]);
    expect(series!.description).toBe('700 checkpoints');
    runs.dispose();
    tree.dispose();
  });

  it('past the search limit: the rows say so in both views', async () => {
    shared.state.workspaceFiles = checkpoints(MAX_LISTED_DUMPS + 5);
    const tree = new RankedListsTree({ call: vi.fn(headline) } as never, () => readConfig(() => undefined), memento() as never);
    expect((await tree.getChildren()).at(-1)!.label).toBe('19,500+ more dumps not listed');
    const runs = new RunsTree(() => tree.listing(), () => readConfig(() => undefined));
    const rows = await runs.getChildren();
    expect(rows.map((r) => r.description ?? r.label)).toEqual([`${MAX_LISTED_DUMPS} checkpoints`, 'More than 20,000 dumps: the rest are not grouped']);
    runs.dispose();
    tree.dispose();
  });
});
