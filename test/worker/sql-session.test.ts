/**
 * The editor's views computed where the data lives (extension/worker/sqlSession.ts), against a real
 * DuckDB (the npm package) and a real two-server ClickHouse (Debian's 18.16): the overview's per-query
 * numbers and every query's detail (positions, ideal order, DCG) must be those of the local engine on
 * the same rows (itself checked against scikit-learn and scipy in test/engine). Query ids carry quotes
 * and backslashes, so a detail fetched with the id pasted into the SQL unescaped would fail or differ.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { headlineCutoff } from '../../extension/engine/evaluate/scorer';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { readDump } from '../../extension/engine/readers/index';
import type { DumpSource } from '../../extension/protocol/worker';
import { loadSql, sqlQueryDetail, sqlQueryJson, type SqlLoaded } from '../../extension/worker/sqlSession';
import { ClickHouseCluster, CLUSTER, TEST_USER } from '../sql/clickhouse-cluster.mjs';
import { expectSameNumbers, seededRows, type SqlTestRow } from '../sql/sqlDumps';

const METRICS = 'ndcg@5,ap,rr,p@3,rbp,err@5,tau';
const dir = mkdtempSync(join(tmpdir(), 'gainline-sql-session-'));
/** Ids a careless query would break: quotes, a backslash, an SQL comment, a "number" with a leading zero. */
const AWKWARD = ["o'hare's \\ hinge", "pipe' OR '1'='1", 'bolt -- nut', '007'];

function rowsWithAwkwardIds(seed: number): SqlTestRow[] {
  const rows = seededRows(seed, 40);
  const names = [...new Set(rows.map((r) => r.query))];
  const rename = new Map(AWKWARD.map((a, i) => [names[i * 3 + 1]!, a]));
  return rows.map((r) => ({ ...r, query: rename.get(r.query) ?? r.query }));
}

function tsv(rows: readonly SqlTestRow[], withRow: boolean): string {
  const head = [...(withRow ? ['row'] : []), 'query_id', 'item_id', 'score', 'label'].join('\t');
  return [head, ...rows.map((r, i) => [...(withRow ? [String(i)] : []), r.query, r.item, r.score, r.label].join('\t'))].join('\n') + '\n';
}

afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Every query's detail from the engine against the local engine's detail of the whole file. */
async function expectDetailsMatchLocal(session: SqlLoaded, localFile: string, c: Conventions): Promise<void> {
  const dump = await readDump(localFile);
  const metrics = session.evaluation.metrics;
  const local = evaluate(dump, metrics, c);
  // The sensitivity rows: the same labels, counts and means (each other convention is one more SQL table).
  expect(session.evaluation.sensitivity.map((r) => [r.label, r.counted, r.unavailable])).toEqual(local.sensitivity.map((r) => [r.label, r.counted, r.unavailable]));
  session.evaluation.sensitivity.forEach((r, i) => {
    const expected = local.sensitivity[i]!.mean;
    if (Number.isNaN(expected)) expect(r.mean, r.label).toBeNaN();
    else expect(Math.abs(r.mean - expected), r.label).toBeLessThanOrEqual(1e-9);
  });
  expectSameNumbers({ evaluation: session.evaluation, queryNames: session.table.queryNames }, { evaluation: local, queryNames: dump.queries }, 'overview');
  const k = headlineCutoff(metrics);
  for (let q = 0; q < dump.queries.size; q++) {
    const name = dump.queries.get(q);
    const view = await sqlQueryDetail(session, name, 50);
    const expected = queryDetail(dump, q, { ...c, maxGrade: c.maxGrade ?? session.gmax }, k, { metrics, maxPairs: 50 });
    const where = `query ${JSON.stringify(name)}`;
    expect(view.query, where).toBe(name);
    expect(view.positions.map((p) => [p.position, p.item, p.label, p.score]), where)
      .toEqual(expected.positions.map((p) => [p.position, p.item, Number.isFinite(p.label) ? p.label : null, Number.isFinite(p.score) ? p.score : null]));
    expect(view.ideal.map((p) => [p.position, p.item]), where).toEqual(
      expected.idealOrder.map((row) => expected.positions.find((p) => p.row === row)!).map((p) => [p.idealPosition, p.item]));
    expect(Math.abs(view.dcg - expected.dcg), where).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(view.idealDcg - expected.idealDcg), where).toBeLessThanOrEqual(1e-12);
    expect(view.invertedPairsTotal, where).toBe(expected.invertedPairsTotal);
  }
  const json = JSON.parse(await sqlQueryJson(session, AWKWARD[0]!));
  expect(json.query).toBe(AWKWARD[0]);
  expect(json.items.length).toBeGreaterThan(0);
}

describe('a file served through DuckDB', () => {
  it('gives the local engine\'s overview and every query\'s detail; leaves out tau and says so', async () => {
    const file = join(dir, 'awkward.tsv');
    writeFileSync(file, tsv(rowsWithAwkwardIds(31), false));
    const c: Conventions = { ...DEFAULT_CONVENTIONS, ties: 'pessimistic' };
    const source: DumpSource = { path: file, sqlEngine: 'duckdb', memoryLimit: '256MB' };
    const { session, overview } = await loadSql(source, { metrics: METRICS, conventions: c }, performance.now());
    try {
      expect(session.evaluation.metrics.map((m) => m.key)).toEqual(parseMetricList(METRICS).map((m) => m.key).filter((k) => k !== 'tau'));
      expect(overview.warnings.some((w) => w.includes('tau'))).toBe(true);
      expect(overview.file.textual).toBe(false);
      await expectDetailsMatchLocal(session, file, c);
      await expect(sqlQueryDetail(session, 'no such query', 10)).rejects.toThrow(/query id present/);
    } finally {
      await session.connection.close();
    }
  }, 600_000);
});

describe('a ClickHouse table', () => {
  const PASSWORD = 'worker-test-5d1e';
  const cluster = new ClickHouseCluster(PASSWORD);
  const rows = rowsWithAwkwardIds(44);
  const file = join(dir, 'cluster.tsv');

  beforeAll(async () => {
    writeFileSync(file, tsv(rows, false));
    await cluster.start();
    const columns = '(row UInt64, query_id String, item_id String, score Nullable(Float64), label Nullable(Float64))';
    for (let i = 0; i < 2; i++) {
      await cluster.run(i, 'CREATE DATABASE shop');
      await cluster.run(i, `CREATE TABLE shop.rows_local ${columns} ENGINE = MergeTree ORDER BY (query_id, row)`);
      await cluster.run(i, `CREATE TABLE shop.rows AS shop.rows_local ENGINE = Distributed(${CLUSTER}, shop, rows_local, cityHash64(query_id))`);
    }
    // TabSeparated escapes: a backslash is written \\ (ClickHouse reads it back as one).
    const escape = (text: string) => text.replace(/\\/g, '\\\\');
    const body = rows.map((r, i) => [i, escape(r.query), r.item, r.score === '' ? '\\N' : r.score, r.label === '' ? '\\N' : r.label].join('\t')).join('\n') + '\n';
    await cluster.run(0, 'INSERT INTO shop.rows FORMAT TabSeparated', body, { insert_distributed_sync: '1' });
  }, 120_000);

  afterAll(() => cluster.stop(), 60_000);

  it('gives the local engine\'s overview and every query\'s detail, with credentials from the editor', async () => {
    const c: Conventions = { ...DEFAULT_CONVENTIONS, ties: 'average' };
    const source: DumpSource = {
      path: `clickhouse://127.0.0.1:${cluster.servers[0]!.httpPort}/shop.rows`, sqlEngine: 'clickhouse', orderColumn: 'row',
      credentials: { user: TEST_USER, password: PASSWORD },
    };
    const { session } = await loadSql(source, { metrics: 'ndcg@5,ap,rr,p@3,rbp', conventions: c }, performance.now());
    await expectDetailsMatchLocal(session, file, c);
    // One statement per query's detail and per sensitivity table: room for a shared, busy machine.
  }, 600_000);

  it('never shows the password when the server refuses it', async () => {
    const source: DumpSource = {
      path: `clickhouse://127.0.0.1:${cluster.servers[0]!.httpPort}/shop.rows`, sqlEngine: 'clickhouse',
      credentials: { user: TEST_USER, password: `${PASSWORD}-wrong` },
    };
    const error = await loadSql(source, { metrics: 'ndcg@5', conventions: DEFAULT_CONVENTIONS }, 0).then(() => undefined, (e: unknown) => e as Error);
    expect(error?.message).toMatch(/server said/);
    expect(error?.message).not.toContain(PASSWORD);
  });
});
