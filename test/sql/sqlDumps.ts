/**
 * Seeded dumps for the SQL engine tests, built to hit every convention's edge: tied scores (several
 * per query), repeated (query, item) rows, missing and non-finite scores, unjudged rows, queries with
 * nothing relevant, single-item queries, ids that look like numbers ("007").
 */
import { expect } from 'vitest';
import type { Evaluation } from '../../extension/engine/evaluate/types';
import type { StringPool } from '../../extension/engine/model/stringPool';
import { seededRandom, QUERY_NAMES } from '../reference/random';

export interface SqlTestRow {
  readonly query: string;
  readonly item: string;
  /** As written in the file: a number, "" (missing), "nan" or "inf". */
  readonly score: string;
  /** As written in the file: a grade or "" (unjudged). */
  readonly label: string;
}

export function seededRows(seed: number, queries: number): SqlTestRow[] {
  const rand = seededRandom(seed);
  const rows: SqlTestRow[] = [];
  for (let q = 0; q < queries; q++) {
    const name = q % 7 === 3 ? `00${q}` : `${QUERY_NAMES[q % QUERY_NAMES.length]} #${q}`;
    const n = 1 + Math.floor(rand() * 9);
    const items: string[] = [];
    for (let i = 0; i < n; i++) {
      const repeat = items.length > 0 && rand() < 0.08;
      const item = repeat ? items[Math.floor(rand() * items.length)]! : i % 4 === 1 ? `0${q}${i}` : `sku-${q}-${i}`;
      items.push(item);
      const u = rand();
      const score = u < 0.05 ? '' : u < 0.08 ? 'nan' : u < 0.1 ? 'inf' : String(Math.floor(rand() * 4) / 4);
      const label = rand() < 0.1 ? '' : String(Math.floor(rand() * 4));
      rows.push({ query: name, item, score, label });
    }
  }
  return rows;
}

export function toDelimited(rows: readonly SqlTestRow[], sep: ',' | '\t'): string {
  const lines = [['query_id', 'item_id', 'score', 'label'].join(sep)];
  for (const r of rows) lines.push([r.query, r.item, r.score, r.label].join(sep));
  return lines.join('\n') + '\n';
}

function close(actual: number, expected: number, what: string): void {
  if (Number.isNaN(expected)) {
    expect(actual, what).toBeNaN();
    return;
  }
  expect(Math.abs(actual - expected), `${what}: ${actual} vs ${expected}`).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(expected)));
}

/**
 * Every per-query number of `sql` against `local` (the local engine on the same file), query by query
 * by name: items, relevant, skipped, every metric and RBP's residual; then the counts behind the warnings.
 */
export function expectSameNumbers(sql: { evaluation: Evaluation; queryNames: StringPool },
  local: { evaluation: Evaluation; queryNames: StringPool }, label: string): void {
  const a = sql.evaluation;
  const b = local.evaluation;
  expect(a.queryCount, `${label}: queries`).toBe(b.queryCount);
  for (let q = 0; q < a.queryCount; q++) {
    const name = sql.queryNames.get(q);
    const lq = local.queryNames.find(name);
    expect(lq, `${label}: query ${name} known locally`).toBeGreaterThanOrEqual(0);
    const where = `${label}, query ${JSON.stringify(name)}`;
    expect(a.perQuery.items[q], `${where}: items`).toBe(b.perQuery.items[lq]);
    expect(a.perQuery.relevant[q], `${where}: relevant`).toBe(b.perQuery.relevant[lq]);
    expect(a.perQuery.skipped[q], `${where}: skipped`).toBe(b.perQuery.skipped[lq]);
    a.metrics.forEach((m, i) => close(a.perQuery.values[i]![q]!, b.perQuery.values[i]![lq]!, `${where}: ${m.key}`));
    if (b.perQuery.rbpResidual) close(a.perQuery.rbpResidual![q]!, b.perQuery.rbpResidual[lq]!, `${where}: rbp residual`);
  }
  expect(a.degenerate, `${label}: counts`).toEqual(b.degenerate);
  a.summary.forEach((s, i) => {
    expect(s.counted, `${label}: ${s.key} counted`).toBe(b.summary[i]!.counted);
    close(s.mean, b.summary[i]!.mean, `${label}: ${s.key} mean`);
  });
}
