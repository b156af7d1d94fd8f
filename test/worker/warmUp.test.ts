/**
 * The engine thread's warm-up: the generated dump is a clean one the fast reading path takes whole
 * (nothing repaired, every grade present), nothing is left on disk, and a thread the host warms
 * reports in its load timeline that the warm-up ran.
 */
import { mkdtempSync, readdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EngineWorker } from '../../extension/host/workerHost';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { readSource } from '../../extension/worker/readSource';
import { warmUp, warmUpFiles } from '../../extension/worker/warmUp';
import { bundleEngineWorker } from './support/workers';

const dir = mkdtempSync(join(tmpdir(), 'gainline-warm-test-'));
/** The engine worker bundled from source (beforeAll). */
let script = '';
let worker: EngineWorker | undefined;

beforeAll(async () => {
  script = await bundleEngineWorker(dir);
});

afterAll(() => worker?.dispose());

describe('engine thread warm-up', () => {
  it('generates a clean dump with its judgments and tables: 120 queries of 12 items, every grade 0–4, nothing repaired', async () => {
    const files = warmUpFiles();
    const path = (name: string) => join(dir, name);
    writeFileSync(path('generated.csv'), files.dump);
    writeFileSync(path('generated.qrels'), files.judgments);
    writeFileSync(path('queries.tsv'), files.queries);
    writeFileSync(path('items.tsv'), files.items);
    const dump = await readSource({
      path: path('generated.csv'), judgments: path('generated.qrels'), judgmentsFound: true, missingQueries: 'skip',
      queries: path('queries.tsv'), items: path('items.tsv'), tablesFound: true,
    });
    expect(dump.rowCount).toBe(120 * 12);
    expect(dump.queries.size).toBe(120);
    expect(new Set(dump.label)).toEqual(new Set([0, 1, 2, 3, 4]));
    expect(dump.notes).toMatchObject({ unjudgedRows: 0, missingScoreRows: 0, judgmentsWithoutRun: 0, judgedQueriesWithoutRun: 0 });
    expect(dump.notes.judgments).toMatchObject({ disagreements: 0 });
    // Both tables joined: the query text, and the queries table's column as a segment.
    expect(dump.joined?.queryText).toBeDefined();
    expect(dump.segments.map((s) => s.name).sort()).toEqual(['device', 'locale']);
  });

  it('leaves nothing behind in the folder it worked in', async () => {
    const parent = mkdtempSync(join(dir, 'parent-'));
    await warmUp(parent);
    expect(readdirSync(parent)).toEqual([]);
  });

  it('stops when its signal is aborted (a real read arrived), still leaving nothing behind', async () => {
    const parent = mkdtempSync(join(dir, 'stopped-'));
    const stop = new AbortController();
    stop.abort();
    await expect(warmUp(parent, stop.signal)).rejects.toThrow();
    expect(readdirSync(parent)).toEqual([]);
  });

  it('runs in a thread the host warms, and the load timeline says when it finished', async () => {
    const file = join(dir, 'run.csv');
    writeFileSync(file, 'query,item,grade,score\nhex key set,SKU-1,1,0.4\nhex key set,SKU-2,0,0.9\n');
    worker = new EngineWorker(script);
    worker.warm();
    const settings = { metrics: 'ndcg@10', conventions: DEFAULT_CONVENTIONS };
    // Polls the real thread until its warm-up has finished (a deadline, no fixed pause); asking does not stop it.
    const deadline = Date.now() + 60_000;
    let times = await worker.call('threadTimes', {});
    while (times.warmed === undefined && Date.now() < deadline) times = await worker.call('threadTimes', {});
    expect(times.warmed).toBeGreaterThanOrEqual(times.threadReady);
    const { timeline } = await worker.call('load', { session: 'w', source: { path: file }, settings });
    expect(timeline.warmed).toBe(times.warmed);
    // A thread that is not warmed never reports one.
    const cold = new EngineWorker(script);
    try {
      const { timeline } = await cold.call('load', { session: 'c', source: { path: file }, settings });
      expect(timeline.warmed).toBeUndefined();
    } finally {
      cold.dispose();
    }
  });
});
