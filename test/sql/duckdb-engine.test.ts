/**
 * DuckDB against the local engine: seeded dumps, every convention combination, every metric SQL can
 * express, each query to 1e-9 (the local engine is itself checked against scikit-learn, scipy and a
 * brute-force enumeration of tied orders in test/engine). Also the refusals and the file kinds.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parquetWriteBuffer } from 'hyparquet-writer';
import { afterAll, describe, expect, it } from 'vitest';
import { evaluateWithDuckDb } from '../../extension/engine/sql/duckdbRunner';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import type { Conventions, GainConvention, NoRelevantPolicy, TieConvention } from '../../extension/engine/metrics/conventions';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { readDump } from '../../extension/engine/readers/index';
import { expectSameNumbers, seededRows, toDelimited } from './sqlDumps';

const dir = mkdtempSync(join(tmpdir(), 'gainline-duckdb-test-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const ALL = 'ndcg@3,dcg,ndcg,p@2,p,r@3,r,ap,ap@3,rr,rr@2,rbp,rbp@3,dcg@5,ndcg@20,hit,hit@2,judged,judged@4';
const GAINS: GainConvention[] = [
  { kind: 'exponential' },
  { kind: 'linear' },
  // Not increasing in grade: the ideal order follows gains, not grades.
  { kind: 'map', gains: new Map([[0, 0], [1, 3], [2, 1], [3, 6]]) },
];
const TIES: TieConvention[] = ['average', 'pessimistic', 'optimistic', 'file-order'];
const POLICIES: NoRelevantPolicy[] = ['skip', 'zero', 'one'];

async function local(path: string, metrics: string, c: Conventions) {
  const dump = await readDump(path);
  return { evaluation: evaluate(dump, parseMetricList(metrics), c, { sensitivity: false }), queryNames: dump.queries };
}

describe('DuckDB engine against the local engine', () => {
  const csv = join(dir, 'seeded.csv');
  writeFileSync(csv, toDelimited(seededRows(15, 160), ','));

  for (const ties of TIES) {
    it(`every gain, no-relevant policy and relevance threshold under ${ties} ties`, async () => {
      // ERR is exact in SQL only without average ties (the expectation over tied orders is refused).
      const metrics = ties === 'average' ? ALL : `${ALL},err@4,err`;
      for (const gain of GAINS) {
        for (const noRelevant of POLICIES) {
          for (const relevantFrom of [1, 2]) {
            const c: Conventions = { ...DEFAULT_CONVENTIONS, gain, ties, noRelevant, relevantFrom, rbpPersistence: 0.7 };
            const sql = await evaluateWithDuckDb(csv, 'seeded.csv', { metrics: parseMetricList(metrics), conventions: c });
            expectSameNumbers(sql, await local(csv, metrics, c), `${ties}/${gain.kind}/${noRelevant}/from ${relevantFrom}`);
          }
        }
      }
      // 18 DuckDB runs: room for a shared, busy machine (the suite's 60 s default is a hang guard, not a speed check).
    }, 600_000);
  }

  it('ERR with an explicit maximum grade and fractional grades', async () => {
    const path = join(dir, 'fractional.tsv');
    const rows = seededRows(7, 60).map((r, i) => ({ ...r, label: r.label === '' ? '' : String(Number(r.label) + (i % 3) * 0.25) }));
    writeFileSync(path, toDelimited(rows, '\t'));
    const c: Conventions = { ...DEFAULT_CONVENTIONS, ties: 'file-order', maxGrade: 5, gain: { kind: 'exponential' } };
    const metrics = 'err,err@3,ndcg@5,ap';
    const sql = await evaluateWithDuckDb(path, 'fractional.tsv', { metrics: parseMetricList(metrics), conventions: c });
    expectSameNumbers(sql, await local(path, metrics, c), 'fractional');
  });

  it('reads Parquet and a folder of Parquet parts in part-name order', async () => {
    const rows = seededRows(3, 40);
    const number = (t: string) => (t === '' ? null : t === 'nan' ? NaN : t === 'inf' ? Infinity : Number(t));
    const part = (from: number, to: number) => new Uint8Array(parquetWriteBuffer({ columnData: [
      { name: 'query_id', data: rows.slice(from, to).map((r) => r.query), type: 'STRING' },
      { name: 'item_id', data: rows.slice(from, to).map((r) => r.item), type: 'STRING' },
      { name: 'score', data: rows.slice(from, to).map((r) => number(r.score)), type: 'DOUBLE' },
      { name: 'label', data: rows.slice(from, to).map((r) => number(r.label)), type: 'DOUBLE' },
    ] }));
    const whole = join(dir, 'whole.parquet');
    writeFileSync(whole, part(0, rows.length));
    const parts = join(dir, 'parts');
    mkdirSync(parts);
    // Cut inside a query so the order across parts matters for repeated rows and file-order ties.
    const cut = Math.floor(rows.length / 2);
    writeFileSync(join(parts, 'part-1.parquet'), part(cut, rows.length));
    writeFileSync(join(parts, 'part-0.parquet'), part(0, cut));
    const metrics = 'ndcg@5,ap,rr,p@3,err@5';
    for (const ties of ['file-order', 'pessimistic'] as const) {
      const c: Conventions = { ...DEFAULT_CONVENTIONS, ties };
      const expected = await local(whole, metrics, c);
      expectSameNumbers(await evaluateWithDuckDb(whole, 'whole.parquet', { metrics: parseMetricList(metrics), conventions: c }), expected, `parquet ${ties}`);
      expectSameNumbers(await evaluateWithDuckDb(parts, 'parts', { metrics: parseMetricList(metrics), conventions: c }), expected, `parts ${ties}`);
    }
  });

  it('reads a folder of parts whose columns differ by name, as the local engine does', async () => {
    const rows = seededRows(4, 30);
    const number = (t: string) => (t === '' || t === 'nan' || t === 'inf' ? null : Number(t));
    const column = (name: string, from: number, to: number) => name === 'query_id' || name === 'item_id' || name === 'store'
      ? { name, data: rows.slice(from, to).map((r, i) => (name === 'store' ? `store ${i % 3}` : name === 'query_id' ? r.query : r.item)), type: 'STRING' as const }
      : { name, data: rows.slice(from, to).map((r) => number(name === 'score' ? r.score : r.label)), type: 'DOUBLE' as const };
    const part = (names: string[], from: number, to: number) => new Uint8Array(parquetWriteBuffer({ columnData: names.map((n) => column(n, from, to)) }));
    const parts = join(dir, 'parts-differ');
    mkdirSync(parts);
    const third = Math.floor(rows.length / 3);
    writeFileSync(join(parts, 'part-0.parquet'), part(['query_id', 'item_id', 'score', 'label'], 0, third));
    // Columns in another order and a segment; then no grade at all.
    writeFileSync(join(parts, 'part-1.parquet'), part(['label', 'score', 'store', 'item_id', 'query_id'], third, 2 * third));
    writeFileSync(join(parts, 'part-2.parquet'), part(['query_id', 'item_id', 'score'], 2 * third, rows.length));
    const metrics = 'ndcg@5,ap,rr,p@3,err@5';
    const c: Conventions = { ...DEFAULT_CONVENTIONS, ties: 'file-order' };
    const expected = await local(parts, metrics, c);
    expect(expected.evaluation.degenerate.unjudgedRows).toBeGreaterThanOrEqual(rows.length - 2 * third);
    expectSameNumbers(await evaluateWithDuckDb(parts, 'parts-differ', { metrics: parseMetricList(metrics), conventions: c }), expected, 'parts');
  });

  it('refuses what SQL cannot express, naming the option', async () => {
    const c = DEFAULT_CONVENTIONS;
    await expect(evaluateWithDuckDb(csv, 'seeded.csv', { metrics: parseMetricList('ndcg@10,tau'), conventions: c })).rejects.toThrow(/--metrics: expected .*tau/);
    await expect(evaluateWithDuckDb(csv, 'seeded.csv', { metrics: parseMetricList('err@10'), conventions: c })).rejects.toThrow(/--metrics: expected err@10 with --ties file-order/);
  });

  it('refuses grades the conventions cannot take, as the local engine does', async () => {
    const path = join(dir, 'negative.csv');
    writeFileSync(path, 'query_id,item_id,score,label\nq,a,1,-1\nq,b,2,1\n');
    await expect(evaluateWithDuckDb(path, 'negative.csv', { metrics: parseMetricList('ndcg@10'), conventions: DEFAULT_CONVENTIONS }))
      .rejects.toThrow(/exponential gain needs grades >= 0/);
    const map: Conventions = { ...DEFAULT_CONVENTIONS, gain: { kind: 'map', gains: new Map([[1, 1]]) } };
    await expect(evaluateWithDuckDb(path, 'negative.csv', { metrics: parseMetricList('ndcg@10'), conventions: map }))
      .rejects.toThrow(/a gain for grade -1 in the gain map/);
  });
});
