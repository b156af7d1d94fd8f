#!/usr/bin/env node
// The same rows written the ways real dumps write them, each timed with `gainline eval` against the plain
// file of its format in the same run: a shape that reads much slower than its plain twin is a cliff (a
// fast path it falls off). Shapes: scores as printers write doubles (17 digits, exponents), half the
// grades missing (empty, or nan), every field quoted; JSON Lines with numeric ids, a feature-vector field,
// a distinct text field per row, a field first written mid-file; Parquet with BIGINT ids (DuckDB writes it). Where only the spelling
// differs from the plain file (quoting, format, feature fields), the NDCG@10 mean must be the plain one's.
//
//   node test/bench/bench-shapes.mjs [--rows N] [--runs N] [--data-dir DIR]
// The files (about 1.5 GB at the default 2M rows) are written once, seeded, into DIR (default
// $GAINLINE_BENCH_DATA, else test/bench/data), under shapes-N/.
import { createWriteStream, existsSync, mkdirSync, renameSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { dataDir, rng, timedCli } from './benchTools.mjs';

const { values: args } = parseArgs({ options: { rows: { type: 'string' }, runs: { type: 'string' }, 'data-dir': { type: 'string' } } });
const rows = Number(args.rows ?? 2_000_000);
const runs = Math.max(1, Number(args.runs ?? 3));
const dir = join(args['data-dir'] ?? process.env.GAINLINE_BENCH_DATA ?? dataDir, `shapes-${rows}`);
mkdirSync(dir, { recursive: true });

/** The rows every shape writes: 100 per query, item ids all distinct, grades 0–4, a segment. */
function* baseRows() {
  const next = rng(20261205);
  for (let r = 0; r < rows; r++) {
    const grade = Math.floor(next() * 5);
    const score = grade * 0.4 + next() * 2 - 1;
    yield { query: `cordless drill ${Math.floor(r / 100)}`, q: Math.floor(r / 100), item: 100_000_000 + r, grade, score, other: next(), locale: r % 3 ? 'en-GB' : 'de-DE' };
  }
}

const tsvLine = (fields) => fields.join('\t') + '\n';
const SHAPES = [
  { name: 'tsv plain', file: 'plain.tsv', plain: true, head: 'query\titem\tgrade\tscore\tlocale\n',
    line: (x) => tsvLine([x.query, `SKU-${x.item}`, x.grade, x.score.toFixed(4), x.locale]) },
  { name: 'tsv, scores as printed doubles', file: 'printed.tsv', head: 'query\titem\tgrade\tscore\tlocale\n',
    line: (x) => tsvLine([x.query, `SKU-${x.item}`, x.grade, String(x.score + x.other * 1e-9), x.locale]) },
  { name: 'tsv, scores with exponents', file: 'exponent.tsv', head: 'query\titem\tgrade\tscore\tlocale\n', same: 'tsv plain',
    line: (x) => tsvLine([x.query, `SKU-${x.item}`, x.grade, Number(x.score.toFixed(4)).toExponential(), x.locale]) },
  { name: 'tsv, half the grades empty', file: 'unjudged.tsv', head: 'query\titem\tgrade\tscore\tlocale\n',
    line: (x) => tsvLine([x.query, `SKU-${x.item}`, x.item % 2 ? x.grade : '', x.score.toFixed(4), x.locale]) },
  { name: 'csv, half the grades nan', file: 'nan.csv', head: 'query,item,grade,score,locale\n',
    line: (x) => [x.query, `SKU-${x.item}`, x.item % 2 ? x.grade : 'nan', x.score.toFixed(4), x.locale].join(',') + '\n' },
  { name: 'csv, every field quoted', file: 'quoted.csv', head: '"query","item","grade","score","locale"\n', same: 'tsv plain',
    line: (x) => [x.query, `SKU-${x.item}`, x.grade, x.score.toFixed(4), x.locale].map((v) => `"${v}"`).join(',') + '\n' },
  { name: 'jsonl plain', file: 'plain.jsonl', plain: true, same: 'tsv plain',
    line: (x) => JSON.stringify({ query: x.query, item: `SKU-${x.item}`, grade: x.grade, score: Number(x.score.toFixed(4)), locale: x.locale }) + '\n' },
  { name: 'jsonl, numeric ids', file: 'numeric-ids.jsonl', sameAs: 'jsonl plain',
    line: (x) => JSON.stringify({ query: x.q, item: x.item, grade: x.grade, score: Number(x.score.toFixed(4)), locale: x.locale }) + '\n' },
  { name: 'jsonl, a feature vector', file: 'features.jsonl', same: 'tsv plain',
    line: (x) => JSON.stringify({ query: x.query, item: `SKU-${x.item}`, grade: x.grade, score: Number(x.score.toFixed(4)), locale: x.locale,
      features: [x.grade, Number(x.other.toFixed(3)), -1] }) + '\n' },
  { name: 'jsonl, a distinct title', file: 'title.jsonl', same: 'tsv plain',
    line: (x) => JSON.stringify({ query: x.query, item: `SKU-${x.item}`, grade: x.grade, score: Number(x.score.toFixed(4)), locale: x.locale,
      title: `Cordless drill, 18 V, model ${x.item}` }) + '\n' },
  { name: 'jsonl, a grade only on judged rows', file: 'judged-only.jsonl', same: 'tsv plain',
    line: (x) => JSON.stringify({ query: x.query, item: `SKU-${x.item}`, ...(x.grade > 0 ? { grade: x.grade } : {}), score: Number(x.score.toFixed(4)),
      locale: x.locale }) + '\n' },
  // A field a job started writing after the lines the fields are learnt from (counted in a note, not read).
  { name: 'jsonl, a field from line 1,001', file: 'late-field.jsonl', same: 'tsv plain',
    line: (x) => JSON.stringify({ query: x.query, item: `SKU-${x.item}`, grade: x.grade, score: Number(x.score.toFixed(4)), locale: x.locale,
      ...(x.item - 100_000_000 >= 1000 ? { shelf: `aisle ${x.item % 9}` } : {}) }) + '\n' },
  { name: 'parquet, text ids', file: 'text-ids.parquet', plain: true, same: 'tsv plain', from: 'plain.tsv', select: 'query, item, grade, score, locale' },
  { name: 'parquet, a timestamp column', file: 'timestamps.parquet', same: 'tsv plain', from: 'plain.tsv',
    select: "query, item, grade, score, locale, make_timestamp((1796292000000000 + hash(item) % 86400000000)::BIGINT) AS asked_at" },
  { name: 'parquet, BIGINT ids', file: 'bigint-ids.parquet', same: 'tsv plain', from: 'plain.tsv', select: "CAST(regexp_extract(query, '(\\d+)$') AS BIGINT) AS query, CAST(substr(item, 5) AS BIGINT) AS item, grade, score, locale" },
];

async function write(shape) {
  const path = join(dir, shape.file);
  if (existsSync(path)) return path;
  console.log(`writing ${path}…`);
  if (shape.from !== undefined) {
    const source = join(dir, shape.from);
    const { DuckDBInstance } = await import('@duckdb/node-api');
    const db = await DuckDBInstance.create(':memory:');
    const connection = await db.connect();
    await connection.run(`COPY (SELECT ${shape.select} FROM read_csv('${source}', delim='\t', header=true, quote='')) TO '${path}.part' (FORMAT parquet)`);
    connection.closeSync();
    db.closeSync();
  } else {
    const out = createWriteStream(`${path}.part`);
    let text = shape.head ?? '';
    for (const x of baseRows()) {
      text += shape.line(x);
      if (text.length > 1 << 20) {
        if (!out.write(text)) await new Promise((r) => out.once('drain', r));
        text = '';
      }
    }
    await new Promise((done) => out.end(text, done));
  }
  renameSync(`${path}.part`, path);
  return path;
}

async function bestOf(path) {
  const all = [];
  for (let i = 0; i < runs; i++) all.push(await timedCli(['eval', path, '--format', 'json']));
  const best = all.reduce((a, b) => (b.seconds < a.seconds ? b : a));
  return { ...best, peakMB: Math.max(...all.map((r) => r.peakMB)), mean: JSON.parse(best.stdout).summary['ndcg@10'] };
}

const results = new Map();
console.log(`${rows.toLocaleString('en-US')} rows per shape, best of ${runs}; load average ${loadavg().map((x) => x.toFixed(1)).join(' ')} at start`);
for (const shape of SHAPES) {
  const path = await write(shape);
  results.set(shape.name, { shape, ...(await bestOf(path)) });
}
const plainOf = (shape) => [...results.values()].find((r) => r.shape.plain && r.shape.file.split('.').pop() === shape.file.split('.').pop().replace('csv', 'tsv'));
console.log('\nshape                               wall      CPU    peak   against its plain format   ndcg@10 mean');
let failed = false;
for (const r of results.values()) {
  const plain = plainOf(r.shape);
  const ratio = plain && !r.shape.plain ? r.seconds / plain.seconds : undefined;
  const same = r.shape.same ?? r.shape.sameAs;
  const agrees = same === undefined || results.get(same).mean === r.mean;
  if (!agrees) failed = true;
  console.log(`${r.shape.name.padEnd(34)} ${r.seconds.toFixed(2).padStart(6)} s ${r.cpu.toFixed(2).padStart(6)} s ${r.peakMB.toFixed(0).padStart(5)} MB   ${
    ratio === undefined ? '(plain)'.padEnd(24) : `${ratio.toFixed(2)}×${ratio > 1.5 ? '  (a cliff: over 1.5×)' : ''}`.padEnd(24)} ${r.mean.toFixed(6)}${
    same === undefined ? '' : agrees ? ` = ${same}` : `  DIFFERS from ${same}`}`);
}
console.log(`load average ${loadavg().map((x) => x.toFixed(1)).join(' ')} at the end`);
if (failed) process.exitCode = 1;
