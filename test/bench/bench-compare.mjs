#!/usr/bin/env node
// Benchmark of comparing two runs. Times, in one process on the same in-memory data:
//   1. compareRuns on two 1M-row runs (10k queries × 100 items, 8 default metrics, the default 10,000 sign
//      patterns and 2,000 bootstrap resamples) against its peer, evaluating both runs the way `gainline eval`
//      does. Target: compare ≤ 1.5× the peer.
//   2. The sign-flip randomization test alone: 10,000 patterns over 100k query differences ("in seconds"),
//      and the bootstrap interval on the same data.
// Then end to end, what a user waits for (part `cli`, in compare-cli.mjs): `gainline compare A B`
// against `gainline eval A` + `gainline eval B` on two 1M-row CSV files.
// Usage: node test/bench/bench-compare.mjs [--part memory|cli]   (both parts by default)
// The engine is bundled from TypeScript with esbuild into a temporary folder first.
import * as esbuild from 'esbuild';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';
import { rng } from './benchTools.mjs';
import { benchCompareCli } from './compare-cli.mjs';

const { values: args } = parseArgs({ options: { part: { type: 'string' } } });
if (args.part && !['memory', 'cli'].includes(args.part)) throw new Error('--part is memory or cli');

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const work = mkdtempSync(join(tmpdir(), 'gainline-bench-compare-'));
const entry = join(work, 'entry.ts');
writeFileSync(
  entry,
  [
    `export { compareRuns, DEFAULT_COMPARE_OPTIONS } from ${JSON.stringify(join(root, 'extension/engine/compare/compare.ts'))};`,
    `export { signFlipTest, bootstrapMeanIntervals } from ${JSON.stringify(join(root, 'extension/engine/compare/stats.ts'))};`,
    `export { evaluate } from ${JSON.stringify(join(root, 'extension/engine/evaluate/evaluate.ts'))};`,
    `export { parseMetricList } from ${JSON.stringify(join(root, 'extension/engine/metrics/parse.ts'))};`,
    `export { DEFAULT_CONVENTIONS, DEFAULT_METRICS } from ${JSON.stringify(join(root, 'extension/engine/metrics/conventions.ts'))};`,
    `export { MapStringPool } from ${JSON.stringify(join(root, 'extension/engine/model/stringPool.ts'))};`,
    `export { emptyNotes } from ${JSON.stringify(join(root, 'extension/engine/model/dump.ts'))};`,
  ].join('\n'),
);
const bundle = join(work, 'engine.mjs');
await esbuild.build({ entryPoints: [entry], outfile: bundle, bundle: true, platform: 'node', format: 'esm', target: 'es2022', logLevel: 'warning' });
const engine = await import(pathToFileURL(bundle).href);
rmSync(work, { recursive: true, force: true });
if (args.part !== 'cli') await inMemory();
if (args.part !== 'memory') await benchCompareCli();

async function inMemory() {

  /** Two runs over the same 10k queries × 100 items; B's scores are A's with noise and a small lift for relevant items. */
  function makeRuns(queryCount, itemsPerQuery) {
    const rows = queryCount * itemsPerQuery;
    const random = rng(12345);
    const queries = new engine.MapStringPool();
    const items = new engine.MapStringPool();
    const query = new Uint32Array(rows);
    const item = new Uint32Array(rows);
    const label = new Float64Array(rows);
    const scoreA = new Float64Array(rows);
    const scoreB = new Float64Array(rows);
    for (let q = 0, r = 0; q < queryCount; q++) {
      const qid = queries.intern(`query ${q}`);
      for (let i = 0; i < itemsPerQuery; i++, r++) {
        query[r] = qid;
        item[r] = items.intern(`sku-${Math.floor(random() * 200_000)}`);
        const u = random();
        label[r] = u < 0.8 ? 0 : u < 0.93 ? 1 : u < 0.98 ? 2 : 3;
        scoreA[r] = label[r] * 0.4 + random() * 1.5;
        scoreB[r] = scoreA[r] + (random() - 0.5) * 0.8 + label[r] * 0.05;
      }
    }
    const dump = (score, path) => ({
      path, format: 'csv', stamp: { size: 0, mtimeMs: 0 }, rowCount: rows, query, item, label, score,
      line: new Uint32Array(rows), offset: new Float64Array(rows).fill(-1), queries, items, segments: [], notes: engine.emptyNotes(),
    });
    return [dump(scoreA, 'a.csv'), dump(scoreB, 'b.csv')];
  }

  /** Median wall-clock and CPU seconds of `runs` runs. CPU time is reported too because the benchmark
   * machine is often shared, and wall-clock ratios then say more about the neighbours than about us. */
  async function median(runs, fn) {
    const wall = [];
    const cpu = [];
    let last;
    for (let i = 0; i < runs; i++) {
      const start = performance.now();
      const cpuStart = process.cpuUsage();
      last = await fn();
      const used = process.cpuUsage(cpuStart);
      wall.push((performance.now() - start) / 1000);
      cpu.push((used.user + used.system) / 1e6);
    }
    const mid = (xs) => xs.sort((x, y) => x - y)[Math.floor(xs.length / 2)];
    return { seconds: mid(wall), cpuSeconds: mid(cpu), last };
  }

  const fmt = (x, digits = 2) => x.toFixed(digits);
  const metrics = engine.parseMetricList(engine.DEFAULT_METRICS);
  const conventions = engine.DEFAULT_CONVENTIONS;
  const [a, b] = makeRuns(10_000, 100);
  console.log(`two runs of ${a.rowCount.toLocaleString('en-US')} rows, 10,000 queries, metrics ${engine.DEFAULT_METRICS}`);

  const peer = await median(3, () => [engine.evaluate(a, metrics, conventions), engine.evaluate(b, metrics, conventions)]);
  const peerNoSensitivity = await median(3, () => [
    engine.evaluate(a, metrics, conventions, { sensitivity: false }),
    engine.evaluate(b, metrics, conventions, { sensitivity: false }),
  ]);
  const defaults = engine.DEFAULT_COMPARE_OPTIONS;
  const ours = await median(3, () => engine.compareRuns(a, b, metrics, conventions, defaults));
  const noInterval = await median(3, () => engine.compareRuns(a, b, metrics, conventions, { ...defaults, bootstrap: 0 }));
  const headline = ours.last.byMetric[0];
  const both = (r) => `${fmt(r.seconds)} s wall, ${fmt(r.cpuSeconds)} s CPU`;
  console.log(`  evaluate A + B (as gainline eval, with convention sensitivity): ${both(peer)}`);
  console.log(`  evaluate A + B without sensitivity:                             ${both(peerNoSensitivity)}`);
  console.log(`  compareRuns (evaluate both + match + 8 metrics × tests, ${defaults.permutations} patterns, ${defaults.bootstrap} resamples): ${both(ours)}`);
  console.log(`  the same without the bootstrap interval (--bootstrap 0):        ${both(noInterval)}`);
  console.log(`  ${headline.key}: Δ ${fmt(headline.summary.meanDifference, 4)}, randomization p ${headline.randomization.p.toPrecision(3)}`);

  const n = 100_000;
  const random = rng(777);
  const d = Float64Array.from({ length: n }, () => Math.round((random() - 0.49) * 20) / 20);
  const flips = await median(3, () => engine.signFlipTest(d, { permutations: 10_000, seed: 3, key: 'ndcg@10' }));
  const boot = await median(1, () => engine.bootstrapMeanIntervals([d], { resamples: defaults.bootstrap, seed: 3 }));
  console.log(`sign-flip test, 10,000 patterns over ${n.toLocaleString('en-US')} differences: ${both(flips)} (p ${flips.last.p.toPrecision(3)})`);
  console.log(`bootstrap interval, ${defaults.bootstrap} resamples over ${n.toLocaleString('en-US')} differences: ${both(boot)}`);

  console.log('targets');
  const ratio = ours.seconds / peer.seconds;
  const cpuRatio = ours.cpuSeconds / peer.cpuSeconds;
  console.log(`  compare two 1M-row runs ≤ 1.5× evaluating both: wall ${fmt(ratio)}×, CPU ${fmt(cpuRatio)}× → ${cpuRatio <= 1.5 ? 'met' : 'MISSED'} (on CPU time)`);
  console.log(`    without the bootstrap interval: CPU ${fmt(noInterval.cpuSeconds / peer.cpuSeconds)}×`);
  console.log(`  10,000 sign-flip patterns over 100k queries in seconds (≤ 5 s): ${fmt(flips.seconds)} s wall → ${flips.seconds <= 5 ? 'met' : 'MISSED'}`);
}
