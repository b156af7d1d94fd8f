/**
 * Threads kept between reads (extension/engine/threads/keptPools.ts), as the editor's engine thread keeps
 * them: a second read and scoring reuse the first one's threads instead of starting new ones; what they
 * give is exactly what one thread gives; the sizes from which a kept idle thread is used; an idle kept
 * thread never keeps a process alive; a cancelled read loses its thread and the next one still reads;
 * closing the kept pools leaves no thread running. The thread scripts are bundled from source.
 */
import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { build } from 'esbuild';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { configureEngine, engineActivity, type EngineSettings } from '../../extension/engine/config';
import { CancelledError } from '../../extension/engine/errors';
import { evaluateDump, readDump } from '../../extension/engine/index';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { closeKeptPools, idleKeptThreads, keptPool } from '../../extension/engine/threads/keptPools';
import { shouldParseInParallel } from '../../extension/engine/threads/parallel';
import { scoringThreads } from '../../extension/engine/threads/parallelEvaluate';
import { TempDir } from '../engine/fixtures/readers/tempFiles';
import { seededRandom } from '../reference/random';
import { bundleWorker } from './support/workers';

const tmp = new TempDir();
let before: EngineSettings | undefined;
const METRICS = parseMetricList('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau');

beforeAll(async () => {
  for (const name of ['parseWorker', 'scoreWorker'] as const) await bundleWorker(name, tmp.path);
  before = configureEngine({ bundleDir: tmp.path, keepThreads: true });
});
afterEach(async () => {
  await closeKeptPools();
  await expect.poll(() => engineActivity().liveThreads, { timeout: 10_000 }).toBe(0);
});
afterAll(() => {
  if (before) configureEngine(before);
  tmp.remove();
});

/** A grouped CSV dump of hardware-store queries with random grades and scores (some tied). */
function dumpText(seed: number, rows: number): string {
  const rnd = seededRandom(seed);
  const lines = ['query,product_id,grade,score,device'];
  for (let r = 0; r < rows; r++) {
    const score = rnd() < 0.1 ? '0.5' : (rnd() * 4 - 2).toFixed(4);
    lines.push(`wall plugs ${Math.floor(r / 23)},SKU-${Math.floor(rnd() * 90_000)},${Math.floor(rnd() * 5)},${score},${rnd() < 0.5 ? 'mobile' : 'desktop'}`);
  }
  return lines.join('\n') + '\n';
}

describe('kept threads', () => {
  it('reuse the same threads read after read, and give what one thread gives, bit for bit', async () => {
    const path = tmp.file('kept.csv', dumpText(5, 30_000));
    configureEngine({ keepThreads: false });
    const plain = await readDump(path, { threads: 1 });
    const plainScores = await evaluateDump(plain, METRICS, DEFAULT_CONVENTIONS, { threads: 1 });
    configureEngine({ keepThreads: true });
    for (let round = 0; round < 2; round++) {
      const dump = await readDump(path, { threads: 2 });
      for (const key of ['query', 'item', 'label', 'score', 'line', 'offset'] as const) expect(Array.from(dump[key]), key).toEqual(Array.from(plain[key]));
      expect(Array.from(dump.itemKey!)).toEqual(Array.from(plain.itemKey!));
      const scores = await evaluateDump(dump, METRICS, DEFAULT_CONVENTIONS, { threads: 2 });
      scores.perQuery.values.forEach((v, m) => expect(Array.from(v), METRICS[m]!.key).toEqual(Array.from(plainScores.perQuery.values[m]!)));
      expect(scores.summary).toEqual(plainScores.summary);
      // The kept pools hold one started thread each, idle between requests, the same across rounds.
      expect(keptPool('parseWorker')!.size).toBe(1);
      expect(keptPool('scoreWorker')!.size).toBe(1);
      expect(engineActivity().liveThreads).toBe(2);
      expect(idleKeptThreads('parseWorker')).toBe(1);
      expect(idleKeptThreads('scoreWorker')).toBe(1);
    }
  });

  it('are used from 12 MB of text and 100k rows when one is idle; without kept threads, from 96 MB and 2M rows', async () => {
    const small = tmp.file('small.csv', 'x'.repeat((12 << 20) - 1));
    const enough = tmp.file('enough.csv', 'x'.repeat(12 << 20));
    // No kept thread started yet: nothing idle, so the one-off sizes hold.
    expect(idleKeptThreads('parseWorker')).toBe(0);
    expect(await shouldParseInParallel(enough, undefined)).toBe(1);
    keptPool('parseWorker')!.warm(1);
    expect(idleKeptThreads('parseWorker')).toBe(1);
    expect(await shouldParseInParallel(small, undefined)).toBe(1);
    expect(await shouldParseInParallel(enough, undefined)).toBe(Math.min(2, availableParallelism()));
    // Scoring: the kept idle threads bound the count, so do the free cores; an explicit count wins.
    expect(scoringThreads(99_999, undefined, 0, 1)).toBe(1);
    expect(scoringThreads(100_000, undefined, 0, 1)).toBe(Math.min(2, availableParallelism()));
    expect(scoringThreads(100_000, undefined, 64, 1)).toBe(1);
    expect(scoringThreads(100_000, undefined, 0, 0)).toBe(1);
    expect(scoringThreads(2_000_000, undefined, 0, 0)).toBe(Math.min(4, availableParallelism()));
    expect(scoringThreads(100_000, 3, 64, 0)).toBe(3);
  });

  it('are not kept when the setting is off: each read starts its own and stops it', async () => {
    configureEngine({ keepThreads: false });
    try {
      const path = tmp.file('own.csv', dumpText(6, 5_000));
      await readDump(path, { threads: 2 });
      expect(keptPool('parseWorker')).toBeUndefined();
      await expect.poll(() => engineActivity().liveThreads, { timeout: 10_000 }).toBe(0);
    } finally {
      configureEngine({ keepThreads: true });
    }
  });

  it('lose a thread to a cancelled read, and the next read starts another and reads the same', async () => {
    const path = tmp.file('cancel.csv', dumpText(7, 40_000));
    const plain = await readDump(path, { threads: 1 });
    const stop = new AbortController();
    const reading = readDump(path, { threads: 2, signal: stop.signal, onProgress: () => stop.abort() });
    await expect(reading).rejects.toBeInstanceOf(CancelledError);
    const again = await readDump(path, { threads: 2 });
    expect(Array.from(again.score)).toEqual(Array.from(plain.score));
    expect(keptPool('parseWorker')!.size).toBeLessThanOrEqual(1);
  });

  it('let a process whose work is done exit while they sit idle', async () => {
    // A script that keeps threads, reads and scores on two, prints, and returns: with the threads still
    // holding the process, it would never exit (the run below would hit its timeout).
    const entry = join(tmp.path, 'keptExit.ts');
    writeFileSync(entry, `
      import { configureEngine, evaluateDump, readDump } from ${JSON.stringify(join(process.cwd(), 'extension/engine/index'))};
      import { parseMetricList } from ${JSON.stringify(join(process.cwd(), 'extension/engine/metrics/parse'))};
      import { DEFAULT_CONVENTIONS } from ${JSON.stringify(join(process.cwd(), 'extension/engine/metrics/conventions'))};
      configureEngine({ bundleDir: ${JSON.stringify(tmp.path)}, keepThreads: true });
      void (async () => {
        const dump = await readDump(process.argv[2]!, { threads: 2 });
        const scored = await evaluateDump(dump, parseMetricList('ndcg@10'), DEFAULT_CONVENTIONS, { threads: 2 });
        console.log(scored.queryCount);
      })();
    `);
    const bundle = join(tmp.path, 'keptExit.js');
    await build({ entryPoints: [entry], bundle: true, platform: 'node', format: 'cjs', outfile: bundle, logLevel: 'warning', external: ['@duckdb/node-api'] });
    const path = tmp.file('exit.csv', dumpText(8, 2_300));
    const run = spawnSync(process.execPath, [bundle, path], { encoding: 'utf8', timeout: 30_000 });
    expect(run.error).toBeUndefined();
    expect(run.status).toBe(0);
    expect(run.stdout.trim()).toBe('100');
  });
});
