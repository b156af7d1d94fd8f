#!/usr/bin/env node
// The per-query table computed where the data lives, against the local engine, on one generated dump
// (10M rows by default): gainline eval (local) on the CSV, --engine duckdb on a TSV and on a Parquet
// copy, and a two-shard ClickHouse cluster on loopback (loading and computing timed separately). Every
// engine computes the same SQL-expressible metrics, and the means are checked to agree.
//
//   node test/bench/bench-sql.mjs [--rows N] [--queries Q] [--memory-limit 2GB] [--skip-clickhouse]
//   node test/bench/bench-sql.mjs --parquet FILE_OR_FOLDER --memory-limit 2GB   (DuckDB only, e.g. 100M rows)
//   node test/bench/bench-sql.mjs --make-parquet FILE --rows 100000000           (writes such a file; not timed)
// With --format json every engine also computes the convention sensitivity rows (in SQL: one more
// per-query table per other gain or tie convention), as a user's report would.
import { spawn, spawnSync } from 'node:child_process';
import { createReadStream, existsSync, mkdirSync, statSync } from 'node:fs';
import { availableParallelism, loadavg } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { ClickHouseCluster, CLUSTER } from '../sql/clickhouse-cluster.mjs';

const here = dirname(fileURLToPath(import.meta.url));
const root = resolve(here, '../..');
const cli = join(root, 'dist/cli.js');
const METRICS = 'ndcg@10,ap,rr,p@5,r@10,rbp';
const { values: args } = parseArgs({
  options: {
    rows: { type: 'string' }, queries: { type: 'string' }, 'memory-limit': { type: 'string' },
    'skip-clickhouse': { type: 'boolean' }, parquet: { type: 'string' }, 'make-parquet': { type: 'string' },
  },
});
const rows = Number(args.rows ?? 10_000_000);
const queries = Number(args.queries ?? Math.max(1, Math.round(rows / 100)));
const memory = args['memory-limit'] ? ['--memory-limit', args['memory-limit']] : [];

/** Runs the command line; wall seconds, CPU seconds and peak RSS (GNU time) of the whole process. */
function timedCli(argv, env = {}) {
  return new Promise((done, fail) => {
    const start = process.hrtime.bigint();
    const child = spawn('/usr/bin/time', ['-v', process.execPath, cli, ...argv], { cwd: root, env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    let err = '';
    child.stdout.on('data', (d) => (out += d));
    child.stderr.on('data', (d) => (err += d));
    child.on('close', (code) => {
      const seconds = Number(process.hrtime.bigint() - start) / 1e9;
      if (code !== 0) return fail(new Error(`gainline ${argv.join(' ')} exited ${code}: ${err.slice(-1500)}`));
      const user = Number(/User time \(seconds\): ([\d.]+)/.exec(err)?.[1]);
      const system = Number(/System time \(seconds\): ([\d.]+)/.exec(err)?.[1]);
      const rss = Number(/Maximum resident set size \(kbytes\): (\d+)/.exec(err)?.[1]) / 1024;
      const report = JSON.parse(out);
      done({ seconds, cpu: user + system, peakMB: rss, summary: report.summary, rows: report.rows ?? report.rowCount ?? NaN, queries: report.queryCount ?? report.queries?.length ?? NaN });
    });
  });
}

const fmt = (x, d = 2) => (Number.isFinite(x) ? x.toFixed(d) : '—');
const line = (label, r, extra = '') =>
  console.log(`${label.padEnd(34)} ${fmt(r.seconds).padStart(7)} s wall ${fmt(r.cpu).padStart(7)} s CPU (this process) ${fmt(r.peakMB, 0).padStart(6)} MB peak${extra}`);

/** The machine is shared: the load average before and after says how much of the wall time was ours. */
const load = () => loadavg().map((x) => x.toFixed(2)).join(' ');

async function duckdbOnly(path) {
  console.log(`DuckDB on ${path} (${METRICS}); DuckDB memory_limit ${args['memory-limit'] ?? 'its default (80% of RAM)'}; ${availableParallelism()} cores; load average ${load()}`);
  const r = await timedCli(['eval', path, '--engine', 'duckdb', '--format', 'json', '--metrics', METRICS, ...memory]);
  line('--engine duckdb', r, `; ${r.rows.toLocaleString('en-US')} rows, ${r.queries.toLocaleString('en-US')} queries; mean ndcg@10 ${fmt(r.summary['ndcg@10'], 5)}`);
  console.log(`load average after: ${load()} (1, 5, 15 minutes)`);
}

/**
 * A hardware-store dump written by DuckDB straight to Parquet, `queries` queries of rows/queries rows in
 * query order (so row groups hold whole queries): ids, grades 0–3 and scores from seeded hashes of the row
 * number, correlated with the grade; some items repeat within a query (drawn from 400,000 SKUs).
 */
async function makeParquet(out) {
  const { DuckDBInstance } = await import('@duckdb/node-api');
  const db = await DuckDBInstance.create(':memory:', { preserve_insertion_order: 'true' });
  const c = await db.connect();
  const perQuery = Math.max(1, Math.round(rows / queries));
  const grade = `least(3, hash(i, 'grade') % 7 // 2)`;
  await c.run(`COPY (SELECT 'drill bits set ' || (i // ${perQuery}) AS query, 'SKU-' || (100000 + hash(i, 'item') % 400000) AS product_id,
    CAST(${grade} AS INTEGER) AS grade, round(${grade} * 0.4 + (hash(i, 'noise') % 100000) / 50000.0 - 1.0, 4) AS score
    FROM range(${rows}) t(i)) TO '${out.replace(/'/g, "''")}' (FORMAT PARQUET)`);
  db.closeSync();
  console.log(`wrote ${out}: ${rows.toLocaleString('en-US')} rows, ${Math.ceil(rows / perQuery).toLocaleString('en-US')} queries`);
}

async function main() {
  if (args['make-parquet']) return makeParquet(resolve(args['make-parquet']));
  if (!existsSync(cli)) throw new Error('dist/cli.js is missing: run "npm run build" first');
  if (args.parquet) return duckdbOnly(resolve(args.parquet));
  const dataDir = join(here, 'data');
  mkdirSync(dataDir, { recursive: true });
  const csv = join(dataDir, rows === 10_000_000 && queries === 100_000 ? 'dump-10m.csv' : `dump-sql-${rows}.csv`);
  if (!existsSync(csv) || statSync(csv).size < rows * 30) {
    console.log(`generating ${csv}…`);
    const g = spawnSync(process.execPath, [join(root, 'test/support/make-demo-data.mjs'), '--rows', String(rows), '--queries', String(queries), '--out', csv], { stdio: 'inherit' });
    if (g.status !== 0) throw new Error('generating the dump failed');
  }
  const tsv = csv.replace(/\.csv$/, '.tsv');
  const parquet = csv.replace(/\.csv$/, '.parquet');
  if (!existsSync(tsv) || !existsSync(parquet)) {
    console.log('writing the TSV and Parquet copies (DuckDB, not timed)…');
    const { DuckDBInstance } = await import('@duckdb/node-api');
    const db = await DuckDBInstance.create(':memory:');
    const c = await db.connect();
    const source = `read_csv('${csv}', all_varchar = true, header = true)`;
    await c.run(`COPY (SELECT * FROM ${source}) TO '${tsv}' (HEADER, DELIMITER '\t', QUOTE '')`);
    await c.run(`COPY (SELECT query, product_id, CAST(grade AS INTEGER) AS grade, CAST(score AS DOUBLE) AS score FROM ${source}) TO '${parquet}' (FORMAT PARQUET)`);
    db.closeSync();
  }
  console.log(`${rows.toLocaleString('en-US')} rows, ${queries.toLocaleString('en-US')} queries; metrics ${METRICS}; --format json; ${availableParallelism()} cores; load average ${load()}`);
  const results = [];
  const local = await timedCli(['eval', csv, '--format', 'json', '--metrics', METRICS]);
  line('local engine, CSV', local);
  results.push(local);
  for (const [label, file] of [['--engine duckdb, TSV', tsv], ['--engine duckdb, Parquet', parquet]]) {
    const r = await timedCli(['eval', file, '--engine', 'duckdb', '--format', 'json', '--metrics', METRICS, ...memory]);
    line(label, r, `; ${fmt(r.seconds / local.seconds, 2)}× the local wall time`);
    results.push(r);
  }
  if (!args['skip-clickhouse']) results.push(await clickhouse(tsv, local));
  const means = results.map((r) => r.summary['ndcg@10']);
  const agree = means.every((m) => Math.abs(m - means[0]) <= 1e-9);
  console.log(`mean ndcg@10: ${means.map((m) => fmt(m, 6)).join(', ')} → ${agree ? 'all engines agree' : 'ENGINES DISAGREE'}; load average after: ${load()}`);
  if (!agree) process.exitCode = 1;
}

/** Two shards on loopback; the dump streamed into a Distributed table, then gainline eval on it. */
async function clickhouse(tsv, local) {
  const cluster = new ClickHouseCluster('bench-only-password');
  try {
    await cluster.start();
    const columns = '(row UInt64, query String, product_id String, grade Float64, score Float64, locale String, device String)';
    for (let i = 0; i < 2; i++) {
      await cluster.run(i, 'CREATE DATABASE shop');
      await cluster.run(i, `CREATE TABLE shop.rows_local ${columns} ENGINE = MergeTree ORDER BY (query, row)`);
      await cluster.run(i, `CREATE TABLE shop.rows AS shop.rows_local ENGINE = Distributed(${CLUSTER}, shop, rows_local, cityHash64(query))`);
      await cluster.run(i, `CREATE TABLE shop.staging (query String, product_id String, grade Float64, score Float64, locale String, device String) ENGINE = Log`);
    }
    // Row numbers are given by the server (rowNumberInAllBlocks over the staged file, in file order).
    const started = process.hrtime.bigint();
    await cluster.run(0, 'INSERT INTO shop.staging FORMAT TabSeparatedWithNames', createReadStream(tsv));
    await cluster.run(0, 'INSERT INTO shop.rows SELECT rowNumberInAllBlocks(), * FROM shop.staging', undefined, { insert_distributed_sync: '1', max_threads: '1' });
    const load = Number(process.hrtime.bigint() - started) / 1e9;
    console.log(`${'ClickHouse load (2 shards)'.padEnd(34)} ${fmt(load).padStart(7)} s wall`);
    const url = `clickhouse://127.0.0.1:${cluster.servers[0].httpPort}/shop.rows`;
    const r = await timedCli(['eval', url, '--order-column', 'row', '--format', 'json', '--metrics', METRICS]);
    line('ClickHouse compute (2 shards)', r, `; ${fmt(r.seconds / local.seconds, 2)}× the local wall time (server CPU not included)`);
    return r;
  } finally {
    await cluster.stop();
  }
}

main().catch((e) => {
  console.error(e instanceof Error ? e.message : String(e));
  process.exitCode = 1;
});

