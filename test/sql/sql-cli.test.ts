/**
 * The command line around the SQL engines: `eval --engine duckdb` gives the local engine's report in
 * every format (numbers to 1e-9), the printed SQL of `gainline sql` runs in DuckDB and gives the same
 * per-query table, and every misuse is one line with exit 2.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runCli } from '../../extension/cli/commands';
import { memoryIO } from '../../extension/cli/io';
import { SQL_ENGINE_NOTE } from '../../extension/engine/sql/perQueryTable';
import { seededRows, toDelimited } from './sqlDumps';

const dir = mkdtempSync(join(tmpdir(), 'gainline-sql-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const rows = seededRows(5, 80);
writeFileSync(join(dir, 'seeded.tsv'), toDelimited(rows, '\t'));

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const io = memoryIO(dir);
  const code = await runCli(args, io);
  return { code, out: io.stdout(), err: io.stderr() };
}

function expectClose(a: unknown, b: unknown, what: string): void {
  if (typeof a === 'number' && typeof b === 'number') {
    expect(Math.abs(a - b), `${what}: ${a} vs ${b}`).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(b)));
  } else if (a && b && typeof a === 'object') {
    expect(Object.keys(a as object).sort(), what).toEqual(Object.keys(b as object).sort());
    for (const key of Object.keys(a as object)) expectClose((a as Record<string, unknown>)[key], (b as Record<string, unknown>)[key], `${what}.${key}`);
  } else {
    expect(a, what).toEqual(b);
  }
}

const METRICS = ['--metrics', 'ndcg@10,dcg@5,ap,rr,p@5,r@10,rbp', '--ties', 'average'];

describe('gainline eval --engine duckdb', () => {
  it('writes the local JSON report, sensitivity rows included, but for the inversion-cost note', async () => {
    const local = await cli(['eval', 'seeded.tsv', '--format', 'json', ...METRICS]);
    const duck = await cli(['eval', 'seeded.tsv', '--format', 'json', '--engine', 'duckdb', '--memory-limit', '256MB', ...METRICS]);
    expect(duck.err).toBe('');
    expect(duck.code).toBe(0);
    const a = JSON.parse(duck.out) as Record<string, unknown>;
    const b = JSON.parse(local.out) as Record<string, unknown>;
    // Each other gain and tie convention is one more per-query table in SQL; same rows, same means to 1e-9.
    expect((a.sensitivity as unknown[]).length).toBe(9);
    // Nor is the inversion cost (it comes with tau's pair pass), so its sentence is not in the notes.
    b.warnings = [...(b.warnings as string[]).filter((w) => !w.startsWith('Inversion cost')), SQL_ENGINE_NOTE];
    expectClose(a, b, 'report');
  });

  it('writes the local CSV report (numbers to 1e-9) and the same worst queries in table and markdown', async () => {
    const local = await cli(['eval', 'seeded.tsv', '--format', 'csv', ...METRICS]);
    const duck = await cli(['eval', 'seeded.tsv', '--format', 'csv', '--engine', 'duckdb', ...METRICS]);
    const cells = (text: string) => text.trim().split('\n').map((l) => l.split(','));
    const [a, b] = [cells(duck.out), cells(local.out)];
    expect(a.length).toBe(b.length);
    a.forEach((row, i) => row.forEach((cell, j) => {
      const [x, y] = [Number(cell), Number(b[i]![j])];
      if (cell !== '' && Number.isFinite(x)) expectClose(x, y, `csv ${i},${j}`);
      else expect(cell).toBe(b[i]![j]);
    }));
    for (const format of ['table', 'markdown']) {
      const worst = (text: string) => text.slice(text.indexOf('Worst'));
      const l = await cli(['eval', 'seeded.tsv', '--format', format, ...METRICS]);
      const d = await cli(['eval', 'seeded.tsv', '--format', format, '--engine', 'duckdb', ...METRICS]);
      expect(d.code).toBe(0);
      expect(worst(d.out)).toBe(worst(l.out));
    }
  });

  it('refuses misuse in one line with exit 2', async () => {
    const cases: [string[], RegExp][] = [
      [['eval', 'seeded.tsv', '--engine', 'duckdb', '--metrics', 'ndcg@10,err@10'], /--metrics: expected err@10 with --ties file-order/],
      [['eval', 'seeded.tsv', '--engine', 'duckdb', '--metrics', 'ndcg@10,tau'], /--metrics: expected .*tau/],
      [['eval', 'seeded.tsv', '--engine', 'quantum'], /--engine: expected one of local, duckdb/],
      [['eval', 'seeded.tsv', '--memory-limit', '1GB'], /--memory-limit: expected --engine duckdb/],
      [['eval', 'seeded.tsv', '--engine', 'duckdb', '--metrics', 'ndcg@10', '--memory-limit', 'lots'], /--memory-limit: expected a DuckDB setting/],
      [['eval', 'clickhouse://user:pw@127.0.0.1:1/db.t', '--metrics', 'ndcg@10'], /without a user or password/],
      [['eval', 'clickhouse://127.0.0.1/db', '--metrics', 'ndcg@10'], /clickhouse:\/\/HOST:PORT\/DATABASE.TABLE/],
      [['sql', '--metrics', 'ndcg@10'], /needs --dialect/],
      // Port 1 on loopback: nothing listens there.
      [['eval', 'clickhouse://127.0.0.1:1/shop.rows', '--metrics', 'ndcg@10'], /expected a ClickHouse server answering over HTTP at 127\.0\.0\.1:1 \(ECONNREFUSED\)/],
      [['sql', '--dialect', 'sqlite'], /--dialect: expected one of duckdb, clickhouse/],
    ];
    for (const [args, message] of cases) {
      const r = await cli(args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err, args.join(' ')).toMatch(message);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.err).not.toContain('pw@');
    }
  });

  it('without --metrics computes the default list less what SQL cannot express, and says so', async () => {
    for (const [ties, expected] of [['average', 'ndcg@10, ap, rr, p@5, r@10, rbp'], ['file-order', 'ndcg@10, err@10, ap, rr, p@5, r@10, rbp']]) {
      const r = await cli(['eval', 'seeded.tsv', '--engine', 'duckdb', '--ties', ties!, '--format', 'json']);
      expect(r.code, r.err).toBe(0);
      const doc = JSON.parse(r.out) as { summary: Record<string, number>; warnings: string[] };
      expect(Object.keys(doc.summary).join(', ')).toBe(`${expected}, rbp_residual`);
      expect(doc.warnings[0]).toBe(`No --metrics given: computed the default metrics SQL can express exactly (${expected}); ` +
        `${ties === 'average' ? 'err@10 and tau' : 'tau'} only with the local engine.`);
    }
  });
});

describe('gainline sql', () => {
  it('prints DuckDB SQL that gives the per-query table of --engine duckdb', async () => {
    const printed = await cli(['sql', '--dialect', 'duckdb', '--from', 'ranked', '--order-column', 'line', '--ties', 'file-order',
      '--metrics', 'ndcg@10,ap,err@5', '--max-grade', '3']);
    expect(printed.code).toBe(0);
    const { DuckDBInstance } = await import('@duckdb/node-api');
    const instance = await DuckDBInstance.create(':memory:');
    const connection = await instance.connect();
    await connection.run(`CREATE TABLE ranked AS SELECT *, row_number() OVER () AS line FROM read_csv('${join(dir, 'seeded.tsv')}', all_varchar = true, delim = '\t', header = true)`);
    const table = (await connection.runAndReadAll(printed.out)).getRowsJS();
    const report = await cli(['eval', 'seeded.tsv', '--format', 'json', '--engine', 'duckdb', '--ties', 'file-order', '--metrics', 'ndcg@10,ap,err@5', '--max-grade', '3']);
    const queries = (JSON.parse(report.out) as { queries: Record<string, number | string | null>[] }).queries;
    expect(table.length).toBe(queries.length);
    table.forEach((row, i) => {
      expect(row[0]).toBe(queries[i]!.query);
      expect(Number(row[2])).toBe(queries[i]!.items);
      for (const [j, key] of [[7, 'ndcg@10'], [8, 'ap'], [9, 'err@5']] as const) {
        const v = queries[i]![key];
        if (v === null) expect(Number.isNaN(row[j] as number)).toBe(true);
        else expectClose(row[j], v, `${queries[i]!.query} ${key}`);
      }
    });
    instance.closeSync();
  });

  it('names the conventions and the row-order rule in its header', async () => {
    const r = await cli(['sql', '--dialect', 'clickhouse', '--metrics', 'ndcg@10', '--gain', 'linear']);
    expect(r.out).toMatch(/^-- gainline per-query table \(clickhouse\): gain linear/);
    expect(r.out).toMatch(/row order: none given; without a row-order column, repeated \(query, item\) rows keep the one with the lowest score/);
    expect(r.out).toMatch(/distributed_group_by_no_merge=1/);
  });
});
