#!/usr/bin/env node
// Benchmark peer: mean NDCG@10 of a CSV, TSV, JSON Lines or Parquet dump computed by DuckDB (the npm
// package @duckdb/node-api, in memory, every core) in one SQL statement over the file itself.
// With --copy FROM TO 'FORMAT x' it writes a TSV dump in another format instead (the bench's other formats).
//
// Written here from the definitions, not with gainline's SQL generator (engine/sql/), so that it is a
// peer and not a copy: exponential gain 2^grade - 1 and discount 1/log2(position + 1) (Burges et al.
// 2005; common practice); tied scores averaged over their orderings (McSherry & Najork 2008), the
// default of gainline and of scikit-learn's ndcg_score: a row whose tie group covers positions
// a..b (b - a + 1 = size) earns gain × (D(b) - D(a - 1)) / size, D(k) being the sum of the first
// min(k, 10) discounts. Queries whose ideal DCG is 0 (nothing relevant) are left out of the mean.
// The dump must have query, grade and score columns (make-demo-data.mjs writes them).
//
// Prints one JSON line like the Python peers: read_s (null: reading and computing are one
// statement), compute_s, queries counted, mean.
import { DuckDBInstance } from '@duckdb/node-api';

const K = 10;

/** The statement; `file` is quoted as an SQL string literal. */
export function ndcgSql(file) {
  const path = literal(file);
  const delim = file.endsWith('.tsv') ? "'\t'" : "','";
  const source = file.endsWith('.parquet') ? `read_parquet(${path})`
    : file.endsWith('.jsonl') ? `read_json(${path}, format = 'newline_delimited')`
      : `read_csv(${path}, header = true, delim = ${delim}, quote = '', all_varchar = true)`;
  return `
WITH rows AS (
  SELECT query AS q, CAST(grade AS DOUBLE) AS g, CAST(score AS DOUBLE) AS s
  FROM ${source}
),
discount_sum AS (
  SELECT k.range AS k, (SELECT coalesce(sum(1.0 / log2(p.range + 1.0)), 0.0) FROM range(1, ${K + 1}) p WHERE p.range <= k.range) AS d
  FROM range(0, ${K + 1}) k
),
placed AS (
  SELECT q, pow(2.0, g) - 1.0 AS gain,
    rank() OVER (PARTITION BY q ORDER BY s DESC) AS first_position,
    count(*) OVER (PARTITION BY q, s) AS tied,
    row_number() OVER (PARTITION BY q ORDER BY g DESC) AS ideal_position
  FROM rows
),
per_query AS (
  SELECT q,
    sum(gain * (hi.d - lo.d) / tied) AS dcg,
    sum(CASE WHEN ideal_position <= ${K} THEN gain / log2(ideal_position + 1.0) ELSE 0.0 END) AS ideal
  FROM placed
  JOIN discount_sum hi ON hi.k = least(first_position + tied - 1, ${K})
  JOIN discount_sum lo ON lo.k = least(first_position - 1, ${K})
  GROUP BY q
)
SELECT count(*) AS queries, avg(dcg / ideal) AS mean FROM per_query WHERE ideal > 0`;
}

/** A file name as an SQL string literal. */
function literal(file) {
  return `'${file.replaceAll("'", "''")}'`;
}

/** Writes the TSV dump `from` to `to` in another format (`how`: the COPY options, such as FORMAT parquet). */
async function copy(from, to, how) {
  const db = await DuckDBInstance.create(':memory:');
  const connection = await db.connect();
  await connection.run(`COPY (SELECT * FROM read_csv(${literal(from)}, header = true, delim = '\t', quote = '')) TO ${literal(to)} (${how})`);
  connection.closeSync();
  db.closeSync();
}

async function main(file) {
  const started = performance.now();
  const db = await DuckDBInstance.create(':memory:');
  const connection = await db.connect();
  const reader = await connection.runAndReadAll(ndcgSql(file));
  const [queries, mean] = reader.getRows()[0];
  const computeS = (performance.now() - started) / 1000;
  connection.closeSync();
  db.closeSync();
  console.log(JSON.stringify({ read_s: null, compute_s: computeS, queries: Number(queries), mean: Number(mean) }));
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const [first, ...rest] = process.argv.slice(2);
  (first === '--copy' ? copy(rest[0], rest[1], rest[2]) : main(first)).catch((e) => {
    console.error(e instanceof Error ? e.message : String(e));
    process.exitCode = 1;
  });
}
