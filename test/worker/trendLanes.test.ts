/**
 * Scoring a series on lanes (engine/trend/lanes.ts, scoreSeries.ts): the checkpoint workers, bundled
 * fresh from source, give every checkpoint's columns and intervals bit for bit as this thread alone
 * does (against checkpointColumns + checkpointIntervals of the plain evaluate, the slow twin); known
 * checkpoints are not read again; a failing checkpoint fails alone; no thread is left running.
 * Invented hardware-store queries, seeded scores.
 */
import { join } from 'node:path';
import { availableParallelism } from 'node:os';
import * as esbuild from 'esbuild';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { configureEngine, engineActivity, type EngineSettings } from '../../extension/engine/config';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { readDump } from '../../extension/engine/readers/index';
import { seriesLanes } from '../../extension/engine/trend/lanes';
import { scoreSeries } from '../../extension/engine/trend/scoreSeries';
import { checkpointColumns, checkpointIntervals } from '../../extension/engine/trend/trend';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { seededRandom } from '../reference/random';

const tmp = new TempDir();
let before: EngineSettings | undefined;
const METRICS = parseMetricList('ndcg@10,err@10,ap,tau');
const BOOTSTRAP = { resamples: 200, seed: 3 };

function checkpoint(seed: number): string {
  const r = seededRandom(seed);
  const lines = ['query,product_id,grade,score'];
  for (let q = 0; q < 60; q++) {
    for (let i = 0; i < 12; i++) lines.push(`mitre saw ${q},sku-${q}-${i},${Math.floor(r() * r() * 4)},${r().toFixed(5)}`);
  }
  return lines.join('\n') + '\n';
}

const paths: string[] = [];
beforeAll(async () => {
  for (let k = 1; k <= 6; k++) paths.push(tmp.file(`epoch-${k}.csv`, checkpoint(k)));
  await esbuild.build({ entryPoints: ['extension/engine/threads/checkpointWorker.ts'], outfile: join(tmp.path, 'checkpointWorker.js'), bundle: true, platform: 'node', format: 'cjs', logLevel: 'error' });
  before = configureEngine({ bundleDir: tmp.path });
}, 60_000);
afterAll(() => {
  if (before) configureEngine(before);
  tmp.remove();
});

async function waitForThreadsToExit(): Promise<void> {
  const end = Date.now() + 10_000;
  while (engineActivity().liveThreads > 0 && Date.now() < end) await new Promise((r) => setTimeout(r, 10));
}

describe('scoring a series on lanes', () => {
  it('gives each checkpoint what one plain evaluation gives, on any number of lanes', async () => {
    const slow: { columns: ReturnType<typeof checkpointColumns>; intervals: Awaited<ReturnType<typeof checkpointIntervals>> }[] = [];
    for (const path of paths) {
      const dump = await readDump(path);
      const columns = checkpointColumns(evaluate(dump, METRICS, { ...DEFAULT_CONVENTIONS, maxGrade: 3 }, { sensitivity: false }), (q) => dump.queries.get(q));
      slow.push({ columns, intervals: await checkpointIntervals(columns.values, BOOTSTRAP.resamples, BOOTSTRAP.seed) });
    }
    for (const lanes of [1, 3]) {
      const series = await scoreSeries({ paths, read: () => ({}), metrics: METRICS, conventions: DEFAULT_CONVENTIONS, bootstrap: BOOTSTRAP, lanes });
      expect(series.conventions.maxGrade).toBe(3); // the first checkpoint's highest grade, for every checkpoint's ERR
      const got = await Promise.all(series.results);
      got.forEach((g, k) => {
        expect(g.columns.queryNames).toEqual(slow[k]!.columns.queryNames);
        g.columns.values.forEach((v, m) => expect(Array.from(v)).toEqual(Array.from(slow[k]!.columns.values[m]!)));
        expect(g.intervals).toEqual(slow[k]!.intervals);
      });
      await waitForThreadsToExit();
      expect(engineActivity().liveThreads).toBe(0);
    }
  }, 60_000);

  it('reads only what it does not know, and a bad checkpoint fails alone', async () => {
    const first = await scoreSeries({ paths, read: () => ({}), metrics: METRICS, conventions: DEFAULT_CONVENTIONS, bootstrap: BOOTSTRAP, lanes: 3 });
    const kept = await Promise.all(first.results);
    const broken = tmp.file('epoch-7.csv', 'query,product_id,grade,score\nmitre saw 1,sku-1,2,0.5\nmitre saw 1,sku-2\n');
    const grown = await scoreSeries({
      paths: [...paths, broken], read: () => ({}), metrics: METRICS, conventions: DEFAULT_CONVENTIONS, bootstrap: BOOTSTRAP, lanes: 3,
      known: (i, task) => (i < paths.length && task.path === paths[i] && JSON.stringify(task.conventions.maxGrade) === JSON.stringify(first.tasks[i]!.conventions.maxGrade) ? kept[i] : undefined),
    });
    expect(grown.scoredNow).toBe(1);
    await expect(grown.results[paths.length]).rejects.toThrow(/epoch-7\.csv:3: expected/);
    expect(await grown.results[2]).toBe(kept[2]);
    await waitForThreadsToExit();
    expect(engineActivity().liveThreads).toBe(0);
  }, 60_000);

  it('chooses one lane for two checkpoints, at least one and never more than asked', () => {
    expect(seriesLanes(2, 1000)).toBe(1);
    expect(seriesLanes(50, 1000)).toBeGreaterThanOrEqual(1);
    expect(seriesLanes(50, 1000)).toBeLessThanOrEqual(4);
    expect(seriesLanes(50, 2 ** 40)).toBe(1); // a terabyte per file: one lane, whatever the cores
    expect(seriesLanes(50, 1000, 3)).toBe(3);
    expect(seriesLanes(2, 1000, 3)).toBe(2);
  });

  it('takes only the cores other programs leave free, keeping at least one lane', () => {
    const cores = availableParallelism();
    expect(seriesLanes(50, 1000, undefined, cores)).toBe(1);
    expect(seriesLanes(50, 1000, undefined, cores + 8)).toBe(1);
    expect(seriesLanes(50, 1000, undefined, 0)).toBe(Math.min(4, cores));
    expect(seriesLanes(50, 1000, undefined, 0.6)).toBe(Math.max(1, Math.min(4, cores - 1)));
    // Asked for explicitly: the caller's number, whatever the load.
    expect(seriesLanes(50, 1000, 3, cores)).toBe(3);
  });
});
