#!/usr/bin/env node
// Many runs, end to end through dist/cli.js, timed from outside with /usr/bin/time -v (wall, CPU = user +
// system over all threads, peak RSS of the process):
//   1. `trend` over 50 checkpoints of 100k rows each, and the same series loaded by the editor's engine
//      worker (dist/engineWorker.js, asked `loadSeries` as the trend view asks it, in a process of its
//      own so its peak RSS is the worker's). Target: ≤ 5 s and peak RSS ≤ 1 GB. Best of --runs (default
//      3), each with the load average when it started.
//   2. `compare BASE C1 … C5` on 1M-row runs against `eval` of the same six files one by one.
//      Target: the comparison takes ≤ 2× the time of evaluating them.
// Checkpoints and candidates are one generated dump with its scores moved by seeded noise, so queries,
// items and grades match as they do between checkpoints of one job. Usage: node test/bench/bench-runs.mjs
// [--only trend|candidates] [--runs N]
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { parseArgs } from 'node:util';
import * as esbuild from 'esbuild';
import { cli, dataDir, rng, root, TIME, timedCli, timedNode } from './benchTools.mjs';

const { values: args } = parseArgs({ options: { only: { type: 'string' }, runs: { type: 'string' } } });
const RUNS = Math.max(1, Number(args.runs ?? 3));

const fmt = (x, digits = 2) => (Number.isFinite(x) ? x.toFixed(digits) : '—');
const loadNote = () => `load average ${loadavg().map((x) => x.toFixed(1)).join(' ')}`;

function generate(file, rows, queries, seed) {
  if (existsSync(file)) return;
  mkdirSync(dirname(file), { recursive: true });
  const r = spawnSync(process.execPath, [join(root, 'test/support/make-demo-data.mjs'), '--rows', String(rows), '--queries', String(queries),
    '--seed', String(seed), '--out', file], { stdio: 'inherit' });
  if (r.status !== 0) throw new Error(`generating ${file} failed`);
}

/** `source` with the score (4th field) moved by seeded noise of the given spread; no quoted fields in it. */
function derive(source, file, seed, spread, drift = 0) {
  if (existsSync(file) && statSync(file).mtimeMs >= statSync(source).mtimeMs) return;
  mkdirSync(dirname(file), { recursive: true });
  const random = rng(seed);
  const lines = readFileSync(source, 'utf8').split('\n');
  for (let i = 1; i < lines.length; i++) {
    if (lines[i] === '') continue;
    const fields = lines[i].split(',');
    const grade = Number(fields[2]);
    fields[3] = (Number(fields[3]) + (random() - 0.5) * spread + drift * grade).toFixed(4);
    lines[i] = fields.join(',');
  }
  writeFileSync(file, lines.join('\n'));
}

const line = (label, r) => console.log(`  ${label.padEnd(28)} ${fmt(r.seconds)} s wall, ${fmt(r.cpu)} s CPU, peak ${fmt(r.peakMB, 0)} MB`);

async function benchTrend() {
  const folder = join(dataDir, 'series-50x100k');
  const base = join(dataDir, 'series-base-100k.csv');
  generate(base, 100_000, 1_000, 4242);
  // Training: the scores drift towards the grades over the first checkpoints, then wander.
  for (let k = 1; k <= 50; k++) derive(base, join(folder, `epoch-${k}.csv`), 1000 + k, 1.5, 0.02 * Math.min(k, 20));
  console.log(`trend over 50 checkpoints × 100k rows (1,000 queries each) in ${folder}`);
  const runs = [];
  for (let i = 0; i < RUNS; i++) {
    const load = loadNote();
    const run = await timedCli(['trend', folder, '--format', 'json']);
    line(`trend DIR, run ${i + 1} (${load})`, run);
    runs.push(run);
  }
  const r = runs.reduce((best, x) => (x.seconds < best.seconds ? x : best));
  line('trend DIR, best', r);
  const report = JSON.parse(r.stdout);
  const headline = report.headline;
  console.log(`  ${report.runs.length} checkpoints, ${report.querySets.queries} queries; ${headline} ${fmt(report.runs[0].summary[headline], 4)} → ` +
    `${fmt(report.runs.at(-1).summary[headline], 4)}, peak at ${report.peaks[headline].run}`);
  console.log(`  target ≤ 5 s: ${fmt(r.seconds)} s → ${r.seconds <= 5 ? 'met' : 'MISSED'}; ` +
    `peak RSS ≤ 1 GB: ${fmt(r.peakMB, 0)} MB → ${r.peakMB <= 1024 ? 'met' : 'MISSED'}`);
  await benchEditorSeries(folder, report);
}

/**
 * The trend view's path: the engine worker bundle asked `loadSeries` for the folder, in a process that
 * holds nothing else, then asked again as a live view does after a change (every checkpoint kept).
 */
async function benchEditorSeries(folder, cliReport) {
  const out = mkdtempSync(join(tmpdir(), 'gainline-bench-series-'));
  const entry = `export { EngineWorker, LOAD_TIMEOUT_MS } from './extension/host/workerHost';
export { evaluationSettings, readConfig } from './extension/host/config';`;
  await esbuild.build({ stdin: { contents: entry, resolveDir: root, loader: 'ts' }, bundle: true, platform: 'node', format: 'cjs',
    target: 'es2022', outfile: join(out, 'host.cjs'), logLevel: 'error' });
  const probe = join(out, 'probe.cjs');
  writeFileSync(probe, `
const { readdirSync } = require('node:fs');
const { join } = require('node:path');
const host = require(${JSON.stringify(join(out, 'host.cjs'))});
const worker = new host.EngineWorker(${JSON.stringify(join(root, 'dist', 'engineWorker.js'))});
const folder = ${JSON.stringify(folder)};
const files = readdirSync(folder).filter((n) => n.endsWith('.csv')).map((name) => ({ source: { path: join(folder, name) }, name }));
const params = { session: 'bench', name: 'series', files, unreadable: [], order: 'number', settings: host.evaluationSettings(host.readConfig(() => undefined)),
  bootstrap: 1000, seed: 1, top: 10 };
(async () => {
  const t0 = performance.now();
  const first = await worker.call('loadSeries', params, { timeoutMs: host.LOAD_TIMEOUT_MS });
  const t1 = performance.now();
  const again = await worker.call('loadSeries', params, { timeoutMs: host.LOAD_TIMEOUT_MS });
  const t2 = performance.now();
  console.log(JSON.stringify({ first: t1 - t0, again: t2 - t1, checkpoints: first.checkpoints.length, scoredAgain: again.scoredNow,
    means: first.checkpoints.map((c) => c.means[0]), unread: first.unread.length }));
  worker.dispose();
})().catch((e) => { console.error(e); process.exit(1); });
`);
  const runs = [];
  for (let i = 0; i < RUNS; i++) {
    const load = loadNote();
    const run = await timedNode([probe]);
    const result = JSON.parse(run.stdout);
    line(`editor worker, run ${i + 1} (${load})`, { ...run, seconds: result.first / 1000 });
    runs.push({ ...run, result });
  }
  const best = runs.reduce((b, x) => (x.result.first < b.result.first ? x : b));
  const agree = JSON.stringify(best.result.means) === JSON.stringify(cliReport.runs.map((x) => x.summary[cliReport.headline]));
  console.log(`  editor worker: ${best.result.checkpoints} checkpoints in ${fmt(best.result.first / 1000)} s (best), peak RSS ${fmt(best.peakMB, 0)} MB; ` +
    `again after a change: ${fmt(best.result.again / 1000)} s, ${best.result.scoredAgain} read again; means ${agree ? 'equal' : 'DIFFER from'} the command line's`);
  if (!agree) process.exitCode = 1;
  console.log(`  target ≤ 5 s: ${fmt(best.result.first / 1000)} s → ${best.result.first <= 5000 ? 'met' : 'MISSED'}; ` +
    `worker peak RSS ≤ 1 GB: ${fmt(best.peakMB, 0)} MB → ${best.peakMB <= 1024 ? 'met' : 'MISSED'}`);
}


async function benchCandidates() {
  const base = join(dataDir, 'dump-1m.csv');
  generate(base, 1_000_000, 10_000, 1);
  const candidates = [1, 2, 3, 4, 5].map((k) => {
    const file = join(dataDir, `dump-1m-candidate-${k}.csv`);
    derive(base, file, 7000 + k, 1.2, 0.05 * (k - 3));
    return file;
  });
  const files = [base, ...candidates];
  console.log(`one baseline against 5 candidates, 1M rows each (${loadNote()})`);
  const evals = [];
  for (const file of files) evals.push(await timedCli(['eval', file, '--format', 'json']));
  const evalSeconds = evals.reduce((s, r) => s + r.seconds, 0);
  const evalCpu = evals.reduce((s, r) => s + r.cpu, 0);
  line('eval each of the 6 (sum)', { seconds: evalSeconds, cpu: evalCpu, peakMB: Math.max(...evals.map((r) => r.peakMB)) });
  const compare = await timedCli(['compare', ...files, '--format', 'json']);
  line('compare BASE C1 … C5', compare);
  // The comparison must have scored what eval scored, or the ratio compares different work.
  const report = JSON.parse(compare.stdout);
  const key = report.headline;
  const agree = report.candidates.every((c, i) => {
    const m = c.metrics.find((x) => x.key === key);
    return Math.abs(m.meanA - JSON.parse(evals[0].stdout).summary[key]) < 1e-9 && Math.abs(m.meanB - JSON.parse(evals[i + 1].stdout).summary[key]) < 1e-9;
  });
  console.log(`  ranking on ${key}: ${report.ranking.order.map((f) => f.replace(/^.*\//, '')).join(' > ')}; compare and eval means ${agree ? 'agree' : 'DIFFER'}`);
  if (!agree) process.exitCode = 1;
  const wall = compare.seconds / evalSeconds;
  const cpu = compare.cpu / evalCpu;
  console.log(`  target: compare ≤ 2× (sum of the six evals): wall ${fmt(wall)}×, CPU ${fmt(cpu)}× → ` +
    `${wall <= 2 ? 'met' : 'MISSED'} on wall time, ${cpu <= 2 ? 'met' : 'MISSED'} on CPU time`);
}

if (!existsSync(cli)) throw new Error('dist/cli.js is missing: run "npm run build" first (npm run bench does)');
if (!existsSync(TIME)) throw new Error(`${TIME} is missing (Debian package "time"): it gives peak RSS and CPU time`);
if (!args.only || args.only === 'trend') await benchTrend();
if (!args.only || args.only === 'candidates') await benchCandidates();
