/**
 * A real two-shard ClickHouse cluster (Debian's 18.16) against the local engine: a seeded dump loaded into
 * a Distributed table sharded by a hash of the query id, every query compared to 1e-9 under several
 * conventions; a table sharded by item id (queries split across shards) must fail; the password never
 * shows in a message.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { evaluateWithClickHouse } from '../../extension/engine/sql/clickhouseRunner';
import { runCli } from '../../extension/cli/commands';
import { memoryIO } from '../../extension/cli/io';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import type { Conventions } from '../../extension/engine/metrics/conventions';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { readDump } from '../../extension/engine/readers/index';
import { ClickHouseCluster, CLUSTER, TEST_USER } from './clickhouse-cluster.mjs';
import { expectSameNumbers, seededRows, toDelimited } from './sqlDumps';

const PASSWORD = 'sesame-7f3a9-hinge';
const cluster = new ClickHouseCluster(PASSWORD);
const dir = mkdtempSync(join(tmpdir(), 'gainline-cluster-test-'));
const csv = join(dir, 'seeded.csv');
const rows = seededRows(21, 120);
const env = { GAINLINE_CLICKHOUSE_USER: TEST_USER, GAINLINE_CLICKHOUSE_PASSWORD: PASSWORD };

const COLUMNS = '(row UInt64, query_id String, item_id String, score Nullable(Float64), label Nullable(Float64))';

beforeAll(async () => {
  writeFileSync(csv, toDelimited(rows, ','));
  await cluster.start();
  for (let i = 0; i < 2; i++) {
    // ON CLUSTER needs ZooKeeper, so every table is created on each server.
    await cluster.run(i, 'CREATE DATABASE shop');
    await cluster.run(i, `CREATE TABLE shop.rows_local ${COLUMNS} ENGINE = MergeTree ORDER BY (query_id, row)`);
    await cluster.run(i, `CREATE TABLE shop.rows AS shop.rows_local ENGINE = Distributed(${CLUSTER}, shop, rows_local, cityHash64(query_id))`);
    await cluster.run(i, `CREATE TABLE shop.split_local ${COLUMNS} ENGINE = MergeTree ORDER BY (query_id, row)`);
    await cluster.run(i, `CREATE TABLE shop.split AS shop.split_local ENGINE = Distributed(${CLUSTER}, shop, split_local, cityHash64(item_id))`);
  }
  const tsv = rows.map((r, i) => [i, r.query, r.item, r.score === '' ? '\\N' : r.score, r.label === '' ? '\\N' : r.label].join('\t')).join('\n') + '\n';
  // Synchronous: the rows are on their shards when the INSERT returns.
  for (const table of ['rows', 'split']) await cluster.run(0, `INSERT INTO shop.${table} FORMAT TabSeparated`, tsv, { insert_distributed_sync: '1' });
}, 120_000);

afterAll(async () => {
  await cluster.stop();
  rmSync(dir, { recursive: true, force: true });
}, 60_000);

const url = (table: string) => `clickhouse://127.0.0.1:${cluster.servers[1]!.httpPort}/shop.${table}`;

describe('ClickHouse cluster against the local engine', () => {
  it('really spreads the queries over both shards', async () => {
    const counts = await Promise.all([0, 1].map(async (i) => Number(await cluster.run(i, 'SELECT uniqExact(query_id) FROM shop.rows_local'))));
    expect(counts[0]! > 0 && counts[1]! > 0, `queries per shard ${counts}`).toBe(true);
    expect(counts[0]! + counts[1]!).toBe(new Set(rows.map((r) => r.query)).size);
  });

  const cases: [string, Conventions][] = [
    ['ndcg@3,dcg,p@2,p,r@3,ap,rr,rbp,rbp@3,err@4,err', { ...DEFAULT_CONVENTIONS, ties: 'file-order' }],
    ['ndcg@3,ndcg,p@2,r,ap,ap@3,rr@2,rbp,hit@2,judged@3', { ...DEFAULT_CONVENTIONS, ties: 'average', noRelevant: 'zero', gain: { kind: 'linear' } }],
    ['ndcg@5,ap,rr,err@5,hit,judged', { ...DEFAULT_CONVENTIONS, ties: 'pessimistic', relevantFrom: 2, noRelevant: 'one' }],
    ['ndcg@5,p@3,rr', { ...DEFAULT_CONVENTIONS, ties: 'optimistic', gain: { kind: 'map', gains: new Map([[0, 0], [1, 3], [2, 1], [3, 6]]) } }],
  ];
  for (const [metrics, c] of cases) {
    it(`every query matches under ${c.ties} ties, ${c.gain.kind} gain, no-relevant ${c.noRelevant}`, async () => {
      const dump = await readDump(csv);
      const local = { evaluation: evaluate(dump, parseMetricList(metrics), c, { sensitivity: false }), queryNames: dump.queries };
      const ch = await evaluateWithClickHouse(url('rows'), { metrics: parseMetricList(metrics), conventions: c, orderColumn: 'row', env });
      expectSameNumbers(ch, local, `${c.ties}`);
    });
  }

  it('fails on a table whose queries are split across shards, returning nothing', async () => {
    await expect(evaluateWithClickHouse(url('split'), { metrics: parseMetricList('ndcg@5'), conventions: DEFAULT_CONVENTIONS, orderColumn: 'row', env }))
      .rejects.toThrow(/expected each query's rows on one shard, but query .* came back from more than one/);
  });

  it('never prints the password: a wrong table, a wrong password, through the command line', async () => {
    const messages: string[] = [];
    for (const [table, password] of [['no_such_table', PASSWORD], ['rows', `${PASSWORD}-wrong`]] as const) {
      const error = await evaluateWithClickHouse(url(table), {
        metrics: parseMetricList('ndcg@5'), conventions: DEFAULT_CONVENTIONS, env: { ...env, GAINLINE_CLICKHOUSE_PASSWORD: password },
      }).then(() => undefined, (e: unknown) => e as Error);
      expect(error, table).toBeInstanceOf(Error);
      messages.push(error!.message);
    }
    const saved = { ...process.env };
    Object.assign(process.env, env);
    try {
      const io = memoryIO();
      expect(await runCli(['eval', url('no_such_table'), '--metrics', 'ndcg@5'], io)).toBe(2);
      messages.push(io.stderr(), io.stdout());
    } finally {
      process.env = saved;
    }
    for (const m of messages) expect(m).not.toContain('sesame');
    expect(messages[0]).toMatch(/no_such_table/);
  });

  it('prints SQL (gainline sql) that gives the engine\'s per-query table when run on the cluster', async () => {
    const metrics = 'ndcg@5,ap,rr,err@3';
    const io = memoryIO();
    expect(await runCli(['sql', '--dialect', 'clickhouse', '--from', 'shop.rows', '--order-column', 'row', '--ties', 'optimistic', '--metrics', metrics], io)).toBe(0);
    const settingsLine = io.stdout().split('\n').find((l) => l.startsWith('-- run with the settings')) ?? '';
    const settings = Object.fromEntries([...settingsLine.matchAll(/(\w+)=(\d+)/g)].map((m) => [m[1]!, m[2]!]));
    expect(settings.distributed_group_by_no_merge).toBe('1');
    const text = await cluster.run(0, io.stdout().replace(/;\s*$/, '') + ' FORMAT JSONCompact', undefined, settings);
    const printed = (JSON.parse(text) as { data: unknown[][] }).data;
    const c: Conventions = { ...DEFAULT_CONVENTIONS, ties: 'optimistic' };
    const engine = await evaluateWithClickHouse(url('rows'), { metrics: parseMetricList(metrics), conventions: c, orderColumn: 'row', env });
    expect(printed.length).toBe(engine.evaluation.queryCount);
    for (const row of printed) {
      const q = engine.queryNames.find(String(row[0]));
      expect(q).toBeGreaterThanOrEqual(0);
      engine.evaluation.metrics.forEach((m, i) => {
        const expected = engine.evaluation.perQuery.values[i]![q]!;
        const got = row[7 + i] === null ? NaN : Number(row[7 + i]);
        if (Number.isNaN(expected)) expect(got, m.key).toBeNaN();
        else expect(got, m.key).toBe(expected);
      });
    }
  });

  it('prints a full report through the command line', async () => {
    const io = memoryIO();
    const saved = { ...process.env };
    Object.assign(process.env, env);
    try {
      expect(await runCli(['eval', url('rows'), '--order-column', 'row', '--metrics', 'ndcg@5,ap', '--format', 'json'], io), io.stderr()).toBe(0);
    } finally {
      process.env = saved;
    }
    const report = JSON.parse(io.stdout()) as { queryCount: number; rows: number };
    expect(report.queryCount).toBe(new Set(rows.map((r) => r.query)).size);
    expect(report.rows).toBe(rows.length);
  });
});
