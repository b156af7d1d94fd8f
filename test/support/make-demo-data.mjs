#!/usr/bin/env node
// Writes the demo workspace's data for the invented "Kettlewood Hardware" product search.
//
//   node test/support/make-demo-data.mjs [--dir DIR]     small demo files into demo/ (committed) or DIR
//   node test/support/make-demo-data.mjs --rows N --out FILE [--queries Q] [--seed S] [--distinct-items] [--scattered]
//                                                        one large CSV (TSV when FILE ends in .tsv) for
//                                                        benchmarks; --distinct-items: no item id repeats;
//                                                        --scattered: the rows in a random order, not by query
//
// Output is deterministic: the same seed gives byte-identical files.
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { gzipSync } from 'node:zlib';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { buildScenario } from './demo-scenario.mjs';
import { PRODUCTS } from './demo-vocabulary.mjs';
import { scatterRows, writeLargeDump } from './demo-large.mjs';

const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), '../..');

function csvField(text) {
  return /[",\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

function rowsForModel(rows, model) {
  return rows.map((r) => ({ ...r, score: model === 'a' ? r.scoreA : r.scoreB }));
}

function writeCsv(file, rows) {
  const lines = ['query,product_id,grade,score,locale,device'];
  for (const r of rows) {
    lines.push([csvField(r.query.text), r.item.id, r.grade, r.score, r.query.locale, r.query.device].join(','));
  }
  writeFileSync(file, lines.join('\n') + '\n');
}

function writeJsonLinesGz(file, rows) {
  const lines = rows.map((r) =>
    JSON.stringify({ query: r.query.text, product_id: r.item.id, grade: r.grade, score: r.score, locale: r.query.locale, device: r.query.device }),
  );
  // mtime 0 in the gzip header keeps the file byte-identical between runs.
  writeFileSync(file, gzipSync(Buffer.from(lines.join('\n') + '\n'), { level: 9 }));
}

function writeParquet(file, rows) {
  const buffer = parquetWriteBuffer({
    columnData: [
      { name: 'query', data: rows.map((r) => r.query.text), type: 'STRING' },
      { name: 'product_id', data: rows.map((r) => r.item.id), type: 'STRING' },
      { name: 'grade', data: rows.map((r) => r.grade), type: 'INT32' },
      { name: 'score', data: rows.map((r) => r.score), type: 'DOUBLE' },
      { name: 'locale', data: rows.map((r) => r.query.locale), type: 'STRING' },
      { name: 'device', data: rows.map((r) => r.query.device), type: 'STRING' },
    ],
  });
  writeFileSync(file, new Uint8Array(buffer));
}

/** Whitespace-separated run file: query id, literal Q0, item, rank, score, run name; best first per query. */
function writeRunFile(file, rows, runName) {
  const lines = [];
  for (const group of groupsOf(rows)) {
    const ranked = [...group].sort((x, y) => y.score - x.score);
    ranked.forEach((r, i) => lines.push(`${r.query.id} Q0 ${r.item.id} ${i + 1} ${r.score} ${runName}`));
  }
  writeFileSync(file, lines.join('\n') + '\n');
}

/** Judgments (qrels): query id, literal 0, item, grade. One line per judged pair. */
function writeJudgments(file, rows) {
  const lines = [];
  const seen = new Set();
  for (const r of rows) {
    const key = `${r.query.id} ${r.item.id}`;
    if (seen.has(key)) continue;
    seen.add(key);
    lines.push(`${r.query.id} 0 ${r.item.id} ${r.grade}`);
  }
  writeFileSync(file, lines.join('\n') + '\n');
}

function writeQueryList(file, queries) {
  const lines = ['id\tquery\tlocale\tdevice', ...queries.map((q) => `${q.id}\t${q.text}\t${q.locale}\t${q.device}`)];
  writeFileSync(file, lines.join('\n') + '\n');
}

/**
 * The catalogue rows the runs retrieved: product id → title, brand and product family (the items table).
 * Only retrieved products, in id order, so the table stays small and every row names a product of the runs.
 */
function writeItems(file, rows) {
  const byId = new Map();
  for (const r of rows) byId.set(r.item.id, r.item);
  const ids = [...byId.keys()].sort();
  const lines = ['product_id\ttitle\tbrand\tfamily'];
  for (const id of ids) {
    const item = byId.get(id);
    lines.push(`${id}\t${item.title}\t${item.title.split(' ')[0]}\t${PRODUCTS[item.family].en}`);
  }
  writeFileSync(file, lines.join('\n') + '\n');
}

/**
 * Sparse feature lines with the ranking features a learner would see (label qid:N index:value ... # item), and
 * a side file with one model score per line in the same order. The format has no item ids (the
 * comment is for people), so repeated rows could not be told apart; they are left out.
 */
function writeSparseFeatures(file, scoresFile, rows) {
  const qidOf = new Map();
  const lines = [];
  const scores = [];
  for (const r of rows) {
    // Feature files come from a join, not from a retrying logger: no repeated rows here.
    if (r.duplicate) continue;
    if (!qidOf.has(r.query.id)) qidOf.set(r.query.id, qidOf.size + 1);
    const titleMatch = r.item.family === r.query.family ? (r.item.variant === r.query.variant ? 1 : 0.5) : 0;
    const features = [titleMatch, r.item.popularity.toFixed(4), (r.item.title.length / 40).toFixed(4)];
    lines.push(`${r.grade} qid:${qidOf.get(r.query.id)} ${features.map((v, i) => `${i + 1}:${v}`).join(' ')} # ${r.item.id}`);
    scores.push(String(r.score));
  }
  writeFileSync(file, lines.join('\n') + '\n');
  writeFileSync(scoresFile, scores.join('\n') + '\n');
}

function* groupsOf(rows) {
  let start = 0;
  for (let i = 1; i <= rows.length; i++) {
    if (i === rows.length || rows[i].query !== rows[start].query) {
      yield rows.slice(start, i);
      start = i;
    }
  }
}

function writeSmallDemo(demoDir) {
  const { queries, rows } = buildScenario();
  const runs = join(demoDir, 'runs');
  const judgments = join(demoDir, 'judgments');
  mkdirSync(runs, { recursive: true });
  mkdirSync(judgments, { recursive: true });
  const a = rowsForModel(rows, 'a');
  const b = rowsForModel(rows, 'b');
  writeCsv(join(runs, 'model-a.csv'), a);
  writeCsv(join(runs, 'model-b.csv'), b);
  writeJsonLinesGz(join(runs, 'model-a.jsonl.gz'), a);
  writeParquet(join(runs, 'model-b.parquet'), b);
  writeRunFile(join(runs, 'model-a.run'), a, 'model-a');
  writeRunFile(join(runs, 'model-b.run'), b, 'model-b');
  writeJudgments(join(judgments, 'grades.qrels'), rows);
  writeQueryList(join(judgments, 'queries.tsv'), queries);
  writeItems(join(judgments, 'items.tsv'), rows);
  writeSparseFeatures(join(runs, 'model-a.sparse'), join(runs, 'model-a.sparse.scores'), a);
  const duplicates = rows.filter((r) => r.duplicate).length;
  console.log(`demo: ${queries.length} queries, ${rows.length} rows per model (${duplicates} duplicate rows) → ${runs}, ${judgments}`);
}

const { values } = parseArgs({
  options: {
    rows: { type: 'string' },
    out: { type: 'string' },
    queries: { type: 'string' },
    seed: { type: 'string' },
    dir: { type: 'string' },
    'distinct-items': { type: 'boolean' },
    scattered: { type: 'boolean' },
  },
});
if (values.rows !== undefined) {
  const rows = Number(values.rows);
  if (!Number.isInteger(rows) || rows < 1 || !values.out) {
    console.error('usage: make-demo-data.mjs --rows N --out FILE [--queries Q] [--seed S] [--distinct-items] [--scattered]');
    process.exit(2);
  }
  const queries = values.queries ? Number(values.queries) : Math.max(1, Math.round(rows / 100));
  const out = resolve(values.out);
  // The same extension, which picks the separator.
  const grouped = values.scattered ? out.replace(/(\.[^./]*)?$/, (ext) => `.grouped${ext}`) : out;
  const written = writeLargeDump(grouped, rows, queries, values.seed ?? 'kettlewood-large-1', {
    distinctItems: values['distinct-items'] === true,
  });
  if (values.scattered) {
    scatterRows(grouped, out, `${values.seed ?? 'kettlewood-large-1'}-scattered`);
    rmSync(grouped);
  }
  console.log(`wrote ${written.rows} rows, ${written.queries} queries, ${(written.bytes / 1e6).toFixed(1)} MB → ${values.out}`);
} else {
  writeSmallDemo(values.dir ? resolve(values.dir) : join(repoRoot, 'demo'));
}
