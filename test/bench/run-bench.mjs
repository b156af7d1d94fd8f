#!/usr/bin/env node
// End-to-end benchmark of `gainline eval` on generated dumps (1M rows; 10M rows whose item ids repeat
// across queries; 10M rows whose item ids are all distinct, as a TSV, grouped by query in 100k or 1M
// queries or in random order, and as JSON Lines and Parquet), against peers run on the same
// files in the same run: DuckDB computing NDCG@10 in SQL, vectorised numpy, and pandas groupby +
// scikit-learn per query (1M only). Each is timed best of N. Then runs every other
// test/bench/bench-*.mjs script (not with --eval-only).
// Usage: npm run bench [-- --only 1m|10m|10m-distinct|10m-distinct-1mq|10m-distinct-scattered|10m-distinct-jsonl|10m-distinct-parquet]
//   [-- --runs N] [-- --eval-only]
// GAINLINE_BENCH_DATA=DIR puts the generated dumps (about 2.6 GB) there instead of test/bench/data/.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readdirSync, statSync, mkdirSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { PYTHON, pythonHas } from '../reference/python.mjs';
import { benchDir as here, cli, dataDir, root, TIME } from './benchTools.mjs';
import { firstTouchCost, scanFloor } from './machineFloor.mjs';


/** Dumps another size is made from. */
const SOURCES = [
  { name: '10m-distinct', file: 'dump-10m-distinct.tsv', rows: 10_000_000, queries: 100_000, distinct: true },
];
const { values: args } = parseArgs({ options: { only: { type: 'string' }, runs: { type: 'string' }, 'eval-only': { type: 'boolean' } } });
const SIZES = [
  { name: '1m', file: 'dump-1m.csv', rows: 1_000_000, queries: 10_000, runs: 3, sklearn: true },
  { name: '10m', file: 'dump-10m.csv', rows: 10_000_000, queries: 100_000, runs: 3, sklearn: false },
  { name: '10m-distinct', file: 'dump-10m-distinct.tsv', rows: 10_000_000, queries: 100_000, runs: 3, sklearn: false, distinct: true },
  // The same rows in ten times as many, ten-row queries (a reranker's candidate lists): what costs per query shows here.
  { name: '10m-distinct-1mq', file: 'dump-10m-distinct-1mq.tsv', rows: 10_000_000, queries: 1_000_000, runs: 3, sklearn: false, distinct: true },
  // The same rows in a random order, a query's rows spread over the file (many inference jobs appending to one dump).
  { name: '10m-distinct-scattered', file: 'dump-10m-distinct-scattered.tsv', rows: 10_000_000, queries: 100_000, runs: 3, sklearn: false, distinct: true,
    scattered: true },
  // The 10m-distinct rows as JSON Lines (one row per line) and as Parquet, both written by DuckDB from the TSV: each format's own reader.
  // The numpy peer reads delimited text only; DuckDB reads either.
  { name: '10m-distinct-jsonl', file: 'dump-10m-distinct.jsonl', from: 'dump-10m-distinct.tsv', copyAs: 'FORMAT json', rows: 10_000_000, queries: 100_000,
    runs: 3, sklearn: false, distinct: true, textOnlyPeers: false },
  { name: '10m-distinct-parquet', file: 'dump-10m-distinct.parquet', from: 'dump-10m-distinct.tsv', copyAs: 'FORMAT parquet', rows: 10_000_000, queries: 100_000,
    runs: 3, sklearn: false, distinct: true, textOnlyPeers: false },
].filter((s) => !args.only || s.name === args.only);
const PEERS = [
  // DuckDB and scikit-learn average tied scores as we do, so their means agree to rounding; the numpy peer
  // breaks ties by sort order (see its docstring), which moves the mean by about 1e-6 on these dumps.
  { key: 'duckdb', label: 'DuckDB SQL', tolerance: 1e-9, run: (file) => peer(process.execPath, join(here, 'peer_duckdb_ndcg.mjs'), file) },
  { key: 'numpy', label: 'numpy vectorised', tolerance: 1e-5, run: (file) => peer(PYTHON, join(here, 'peer_numpy_ndcg.py'), file) },
  { key: 'sklearn', label: 'pandas+sklearn per query', tolerance: 1e-9, run: (file) => peer(PYTHON, join(here, 'peer_sklearn_ndcg.py'), file) },
];

/** Runs a command, timing it from outside; peak RSS from GNU time when present. */
function timed(command, argv, { stdout = 'ignore' } = {}) {
  return new Promise((done, fail) => {
    const useTime = existsSync(TIME);
    const start = process.hrtime.bigint();
    const child = spawn(useTime ? TIME : command, useTime ? ['-v', command, ...argv] : argv, {
      cwd: root,
      stdio: ['ignore', stdout, 'pipe'],
    });
    let err = '';
    let out = '';
    child.stderr.on('data', (d) => (err += d));
    child.stdout?.on('data', (d) => (out += d));
    child.on('error', fail);
    child.on('close', (code) => {
      const seconds = Number(process.hrtime.bigint() - start) / 1e9;
      const rss = /Maximum resident set size \(kbytes\): (\d+)/.exec(err);
      const user = /User time \(seconds\): ([\d.]+)/.exec(err);
      const system = /System time \(seconds\): ([\d.]+)/.exec(err);
      const cpu = user && system ? Number(user[1]) + Number(system[1]) : NaN;
      if (code !== 0) return fail(new Error(`${command} ${argv.join(' ')} exited ${code}:\n${err.slice(-2000)}`));
      done({ seconds, cpu, peakMB: rss ? Number(rss[1]) / 1024 : NaN, stdout: out, stderr: err });
    });
  });
}

function ensureDump(size) {
  mkdirSync(dataDir, { recursive: true });
  const file = join(dataDir, size.file);
  if (size.from !== undefined) {
    if (!existsSync(file)) {
      const source = ensureDump(SOURCES.find((s) => s.file === size.from));
      console.log(`writing ${file} from ${source} with DuckDB (${size.copyAs})…`);
      const r = spawnSync(process.execPath, [join(here, 'peer_duckdb_ndcg.mjs'), '--copy', source, file, size.copyAs], { stdio: 'inherit' });
      if (r.status !== 0) throw new Error(`writing ${file} failed`);
    }
    return file;
  }
  if (!existsSync(file) || statSync(file).size < size.rows * 30) {
    console.log(`generating ${file} (${size.rows.toLocaleString('en-US')} rows, ${size.queries.toLocaleString('en-US')} queries${size.distinct ? ', every item id distinct' : ''}${size.scattered ? ', rows in random order' : ''})…`);
    const r = spawnSync(process.execPath, [join(root, 'test/support/make-demo-data.mjs'), '--rows', String(size.rows), '--queries', String(size.queries), '--out', file,
      ...(size.distinct ? ['--distinct-items'] : []), ...(size.scattered ? ['--scattered'] : [])], { stdio: 'inherit' });
    if (r.status !== 0) throw new Error('generating the benchmark dump failed');
  }
  return file;
}

async function peer(command, script, file) {
  const run = await timed(command, [script, file], { stdout: 'pipe' });
  return { ...run, result: JSON.parse(run.stdout.trim().split('\n').pop()) };
}

/** Best of `runs` (wall), with the lowest CPU time and the highest peak memory of the runs. */
async function bestOf(runs, once) {
  const all = [];
  for (let i = 0; i < runs; i++) all.push(await once());
  const best = all.reduce((a, b) => (b.seconds < a.seconds ? b : a));
  return { ...best, all: all.map((r) => r.seconds), cpu: Math.min(...all.map((r) => r.cpu)), peakMB: Math.max(...all.map((r) => r.peakMB)) };
}

const fmt = (x, digits = 2) => (Number.isFinite(x) ? x.toFixed(digits) : '—');
const rate = (rows, s) => `${(rows / s / 1e6).toFixed(2)}M`;

if (!existsSync(cli)) throw new Error('dist/cli.js is missing: run "npm run build" first (npm run bench does)');
const loadNote = () => `load average ${loadavg().map((x) => x.toFixed(1)).join(' ')}`;
console.log(`machine: ${cpus().length} cores (${cpus()[0]?.model ?? 'unknown'}), node ${process.version}, ${loadNote()} at start`);
const havePython = pythonHas('numpy, pandas');
const haveSklearn = havePython && pythonHas('sklearn');
if (!havePython) console.log(`note: ${PYTHON} with numpy and pandas not found; the Python peers are skipped`);
const available = { duckdb: true, numpy: havePython, sklearn: haveSklearn };

const results = [];
for (const size of SIZES) {
  const file = ensureDump(size);
  const runs = args.runs ? Number(args.runs) : size.runs;
  console.log(`${size.name}: timing gainline and its peers, best of ${runs} (${loadNote()})`);
  const ours = await bestOf(runs, () => timed(process.execPath, [cli, 'eval', file, '--format', 'json']));
  // One more run keeping the output, to check the peers computed the same quantity.
  const check = await timed(process.execPath, [cli, 'eval', file, '--format', 'json', '--metrics', 'ndcg@10'], { stdout: 'pipe' });
  const checked = JSON.parse(check.stdout);
  // The default output (the table), as the issue timed `gainline eval`: the JSON above also renders 100k records.
  const table = size.distinct ? await bestOf(runs, () => timed(process.execPath, [cli, 'eval', file])) : undefined;
  const row = { size, ...ours, ourMean: checked.summary['ndcg@10'], ndcgOnly: check, table, peers: {} };
  for (const p of PEERS) {
    if (!available[p.key] || (p.key === 'sklearn' && !size.sklearn) || (p.key !== 'duckdb' && size.textOnlyPeers === false)) continue;
    row.peers[p.key] = await bestOf(p.key === 'sklearn' ? 1 : runs, () => p.run(file));
  }
  results.push(row);
}

console.log('\ngainline eval FILE --format json > /dev/null  (default metrics; best of N runs, wall clock incl. process start)');
console.log('(CPU s = user + system time of the process, all threads; less sensitive to a busy machine than wall time)');
console.log('dump           rows         queries   runs (s)              best s   rows/s   CPU s   peak RSS MB');
for (const r of results) {
  console.log(
    `${r.size.name.padEnd(14)} ${r.size.rows.toLocaleString('en-US').padEnd(12)} ${r.size.queries.toLocaleString('en-US').padEnd(9)} ${r.all.map((s) => fmt(s)).join(', ').padEnd(21)} ${fmt(r.seconds).padStart(6)}   ${rate(r.size.rows, r.seconds).padStart(6)}  ${fmt(r.cpu).padStart(6)}   ${fmt(r.peakMB, 0).padStart(6)}`,
  );
}
console.log('\npeers on the same files (NDCG@10 only; best of N; wall clock incl. start and reading the file; in-process read+compute in brackets)');
const agreement = (p, r, tolerance) => {
  const same = Math.abs(p.result.mean - r.ourMean) <= tolerance;
  return `mean ${fmt(p.result.mean, 9)} vs ours ${fmt(r.ourMean, 9)}${p.result.queries !== undefined ? ` over ${p.result.queries} queries` : ''} → ${same ? `same to ${tolerance}` : 'DIFFERENT'}`;
};
for (const r of results) {
  const line = [`${r.size.name}:`];
  for (const p of PEERS) {
    const run = r.peers[p.key];
    if (!run) continue;
    const split = run.result.read_s === null ? fmt(run.result.compute_s) : `${fmt(run.result.read_s)}+${fmt(run.result.compute_s)}`;
    line.push(
      `${p.label} ${fmt(run.seconds)} s [${split}], CPU ${fmt(run.cpu)} s, ${fmt(run.peakMB, 0)} MB; ` +
        `ratio peer/ours: wall ${fmt(run.seconds / r.seconds, 1)}×, CPU ${fmt(run.cpu / r.cpu, 1)}×; ${agreement(run, r, p.tolerance)}`,
    );
  }
  if (r.size.textOnlyPeers === false) line.push('the Python peers read delimited text only: not run on this format');
  else if (!r.size.sklearn) line.push('pandas+sklearn per query not run on this size (too slow; see the 1M row)');
  // Like for like: gainline asked for NDCG@10 alone (one run, so noisier than the best-of-N above).
  const like = Object.entries(r.peers).filter(([key]) => key !== 'sklearn')
    .map(([key, p]) => `${key}/ours wall ${fmt(p.seconds / r.ndcgOnly.seconds, 1)}×, CPU ${fmt(p.cpu / r.ndcgOnly.cpu, 1)}×`);
  line.push(`like for like, gainline eval --metrics ndcg@10: ${fmt(r.ndcgOnly.seconds)} s wall, CPU ${fmt(r.ndcgOnly.cpu)} s${like.length ? `; ${like.join('; ')}` : ''}`);
  console.log(line.join('\n   '));
}

console.log(`\ntargets (${loadNote()} at the end; on a busy machine wall times are inflated, ratios less so)`);
const verdict = (ok) => (ok ? 'met' : 'MISSED');
for (const r of results) {
  const { duckdb, numpy } = r.peers;
  if (r.size.name === '10m-distinct') {
    console.log(`  10M distinct ids ≤ 3 s: ${fmt(r.seconds)} s → ${verdict(r.seconds <= 3)} (CPU ${fmt(r.cpu)} s)`);
    console.log(`  10M distinct ids peak RSS ≤ 1 GB: ${fmt(r.peakMB, 0)} MB → ${verdict(r.peakMB <= 1024)}`);
    if (duckdb) console.log(`  10M distinct ids ≥ 2× faster than DuckDB: wall ${fmt(duckdb.seconds / r.seconds, 1)}× → ${verdict(duckdb.seconds >= 2 * r.seconds)} (CPU ${fmt(duckdb.cpu / r.cpu, 1)}×)`);
    if (numpy) console.log(`  10M distinct ids ≥ 5× faster than vectorised numpy: wall ${fmt(numpy.seconds / r.seconds, 1)}× → ${verdict(numpy.seconds >= 5 * r.seconds)} (CPU ${fmt(numpy.cpu / r.cpu, 1)}×)`);
    if (numpy && r.table) {
      console.log(`  (the default table output, best of ${r.table.all.length}: ${fmt(r.table.seconds)} s, CPU ${fmt(r.table.cpu)} s; numpy/ours wall ${fmt(numpy.seconds / r.table.seconds, 1)}×)`);
    }
    if (numpy) await printFloors(r, numpy.seconds / 5);
  }
  if (r.size.name === '10m-distinct-1mq') {
    const vs = (p, label) => (p ? `; ${label}/ours wall ${fmt(p.seconds / r.seconds, 1)}×` : '');
    console.log(`  10M distinct ids in 1M queries of about 10 rows, the 10M-distinct targets on another shape: ${fmt(r.seconds)} s → ${verdict(r.seconds <= 3)}, ` +
      `${fmt(r.peakMB, 0)} MB → ${verdict(r.peakMB <= 1024)}${vs(duckdb, 'DuckDB')}${vs(numpy, 'numpy')}` +
      `${r.table ? ` (the default table output: ${fmt(r.table.seconds)} s, ${fmt(r.table.peakMB, 0)} MB)` : ''}`);
  }
  if (r.size.name === '10m-distinct-scattered') {
    const vs = (p, label) => (p ? `; ${label}/ours wall ${fmt(p.seconds / r.seconds, 1)}×` : '');
    console.log(`  10M distinct ids with the rows in random order, the 10M-distinct targets on another shape: ${fmt(r.seconds)} s → ${verdict(r.seconds <= 3)}, ` +
      `${fmt(r.peakMB, 0)} MB → ${verdict(r.peakMB <= 1024)}${vs(duckdb, 'DuckDB')}${vs(numpy, 'numpy')}` +
      `${r.table ? ` (the default table output: ${fmt(r.table.seconds)} s, ${fmt(r.table.peakMB, 0)} MB)` : ''}`);
  }
  if (r.size.from !== undefined) {
    console.log(`  ${r.size.name}, the 10M-distinct targets in another format: ${fmt(r.seconds)} s → ${verdict(r.seconds <= 3)}, ` +
      `${fmt(r.peakMB, 0)} MB → ${verdict(r.peakMB <= 1024)}${duckdb ? `; DuckDB/ours wall ${fmt(duckdb.seconds / r.seconds, 1)}×` : ''}` +
      `${r.table ? ` (the default table output: ${fmt(r.table.seconds)} s, ${fmt(r.table.peakMB, 0)} MB)` : ''}`);
  }
  if (r.size.name === '10m') console.log(`  10M rows, repeated ids ≤ 3 s: ${fmt(r.seconds)} s → ${verdict(r.seconds <= 3)} (CPU ${fmt(r.cpu)} s)`);
  if (r.size.name === '1m' && numpy) {
    console.log(`  1M rows: no speed target of its own (process start dominates); numpy/ours wall ${fmt(numpy.seconds / r.seconds, 1)}×, CPU ${fmt(numpy.cpu / r.cpu, 1)}×`);
  }
}

/**
 * What the 5×-numpy target leaves against this machine's floors, measured now: Node's start, a bare scan of
 * the file, and the first write to fresh memory for the least a read must keep per row (query id, item
 * key, grade, score, byte offset: 32 bytes); then our own phases from one run with --timings.
 */
async function printFloors(r, allowed) {
  const file = join(dataDir, r.size.file);
  const { nodeStart, scan } = scanFloor(file);
  const touch = firstTouchCost();
  const keptMB = (r.size.rows * 32) / 2 ** 20;
  const phases = /timings: read ([\d.]+) s, score ([\d.]+) s, report ([\d.]+) s/.exec(
    (await timed(process.execPath, [cli, 'eval', file, '--format', 'json', '--timings'])).stderr);
  console.log(`  what 5× numpy leaves: ${fmt(allowed)} s. Floors measured now: Node's start ${fmt(nodeStart)} s; a bare two-thread scan of the file ` +
    `(every byte once, grade and score parsed, nothing kept) ${fmt(scan)} s; first writes to fresh memory ${fmt(touch.small.min, 1)}–${fmt(touch.small.max, 1)} ms/MB ` +
    `with 4 KB pages, ${fmt(touch.large.min, 1)}–${fmt(touch.large.max, 1)} ms/MB with large pages, so the ${fmt(keptMB, 0)} MB a read keeps at least cost ` +
    `${fmt((touch.large.min * keptMB) / 1000)}–${fmt((touch.large.max * keptMB) / 1000)} s of CPU`);
  if (phases) console.log(`  ours in one run with --timings: read ${phases[1]} s, score ${phases[2]} s, report ${phases[3]} s`);
}

const others = args['eval-only'] ? [] : readdirSync(here).filter((f) => /^bench-.*\.mjs$/.test(f)).sort();
for (const script of others) {
  console.log(`\n== ${script}`);
  const r = spawnSync(process.execPath, [join(here, script)], { cwd: root, stdio: 'inherit' });
  if (r.status !== 0) console.log(`${script} exited ${r.status}`);
}
