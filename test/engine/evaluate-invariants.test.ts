/**
 * Invariants that hold for any data, checked on seeded random dumps with larger lists than the brute-force
 * comparison can afford.
 */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS, type Conventions, type TieConvention } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { buildDump, type TestRow } from './dumpBuilder';
import { seededRandom, QUERY_NAMES } from '../reference/random';

const METRICS = parseMetricList('ndcg@10,dcg@10,ndcg,err@10,err,ap,rr,p@5,r@10,rbp,tau');

function randomRows(seed: number, queries: number, maxItems: number, levels: number): TestRow[] {
  const rand = seededRandom(seed);
  const rows: TestRow[] = [];
  for (let q = 0; q < queries; q++) {
    const n = 1 + Math.floor(rand() * maxItems);
    for (let i = 0; i < n; i++) {
      rows.push({
        query: `${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}`,
        item: `sku-${i}`,
        label: rand() < 0.05 ? NaN : Math.floor(rand() * rand() * 5),
        score: Math.floor(rand() * levels) / levels,
      });
    }
  }
  return rows;
}

/** Equal within 1e-12, NaN equal to NaN. */
function same(actual: number, expected: number): void {
  if (Number.isNaN(expected)) expect(actual).toBeNaN();
  else expect(Math.abs(actual - expected)).toBeLessThanOrEqual(1e-12);
}

function columns(rows: TestRow[], conventions: Conventions) {
  return evaluate(buildDump(rows), METRICS, conventions);
}

describe('invariants', () => {
  const rows = randomRows(7, 150, 60, 12);

  it('NDCG never exceeds 1 and DCG never exceeds the ideal DCG, under every tie convention', () => {
    for (const ties of ['average', 'pessimistic', 'optimistic', 'file-order'] as TieConvention[]) {
      const e = columns(rows, { ...DEFAULT_CONVENTIONS, ties });
      for (const key of ['ndcg@10', 'ndcg']) {
        const col = e.perQuery.values[METRICS.findIndex((m) => m.key === key)]!;
        let checked = 0;
        col.forEach((v) => {
          if (Number.isNaN(v)) return;
          expect(v).toBeLessThanOrEqual(1 + 1e-12);
          expect(v).toBeGreaterThanOrEqual(0);
          checked++;
        });
        expect(checked).toBeGreaterThan(100);
      }
    }
  });

  it('adding a constant to every score, or scaling by a positive factor, changes nothing', () => {
    const base = columns(rows, DEFAULT_CONVENTIONS);
    for (const f of [(s: number) => s + 17.25, (s: number) => s * 3 - 2]) {
      const moved = columns(rows.map((r) => ({ ...r, score: f(r.score) })), DEFAULT_CONVENTIONS);
      base.perQuery.values.forEach((col, m) => col.forEach((v, q) => same(moved.perQuery.values[m]![q]!, v)));
      base.perQuery.inversionCost.forEach((v, q) => same(moved.perQuery.inversionCost[q]!, v));
    }
  });

  it('under average ties, reversing the file order of rows changes nothing', () => {
    const base = columns(rows, DEFAULT_CONVENTIONS);
    const reversed = columns(rows.slice().reverse(), DEFAULT_CONVENTIONS);
    const dumpA = buildDump(rows);
    const dumpB = buildDump(rows.slice().reverse());
    for (let q = 0; q < dumpA.queries.size; q++) {
      const qb = dumpB.queries.find(dumpA.queries.get(q));
      base.perQuery.values.forEach((col, m) => same(reversed.perQuery.values[m]![qb]!, col[q]!));
    }
  });

  it('the average over tie orders lies between the pessimistic and the optimistic value for every metric', () => {
    const avg = columns(rows, DEFAULT_CONVENTIONS);
    const low = columns(rows, { ...DEFAULT_CONVENTIONS, ties: 'pessimistic' });
    const high = columns(rows, { ...DEFAULT_CONVENTIONS, ties: 'optimistic' });
    let strict = 0;
    METRICS.forEach((m, i) => {
      if (m.name === 'tau') return; // tau-b reads scores, not a tie order
      avg.perQuery.values[i]!.forEach((v, q) => {
        if (Number.isNaN(v)) return;
        expect(v).toBeGreaterThanOrEqual(low.perQuery.values[i]![q]! - 1e-12);
        expect(v).toBeLessThanOrEqual(high.perQuery.values[i]![q]! + 1e-12);
        if (high.perQuery.values[i]![q]! - low.perQuery.values[i]![q]! > 1e-9) strict++;
      });
    });
    expect(strict).toBeGreaterThan(50); // the data really has ties that matter
  });

  it('moving a relevant item below a lower-graded neighbour never raises DCG@10', () => {
    const rand = seededRandom(99);
    for (let trial = 0; trial < 300; trial++) {
      const n = 2 + Math.floor(rand() * 15);
      const grades = Array.from({ length: n }, () => Math.floor(rand() * 4));
      const scores = Array.from({ length: n }, (_, i) => n - i); // distinct, in file order
      const i = Math.floor(rand() * (n - 1));
      const j = i + 1 + Math.floor(rand() * (n - 1 - i));
      if (!(grades[i]! > 0 && grades[j]! <= grades[i]!)) continue;
      const swapped = scores.slice();
      swapped[i] = scores[j]!;
      swapped[j] = scores[i]!;
      const dcg = (s: number[]) =>
        evaluate(buildDump(grades.map((label, k) => ({ query: 'led bulb e27', item: `sku-${k}`, label, score: s[k]! }))), parseMetricList('dcg@10'), DEFAULT_CONVENTIONS)
          .perQuery.values[0]![0]!;
      expect(dcg(swapped)).toBeLessThanOrEqual(dcg(scores) + 1e-12);
    }
  });

  it('inversions of a list sorted by grade are 0 and tau is 1 when scores and grades agree exactly', () => {
    const grades = [4, 3, 3, 2, 1, 0];
    const e = columns(grades.map((label, i) => ({ query: 'paint roller', item: `sku-${i}`, label, score: label })), DEFAULT_CONVENTIONS);
    expect(e.perQuery.inversions[0]).toBe(0);
    expect(e.perQuery.inversionCost[0]).toBe(0);
    expect(e.perQuery.values[METRICS.findIndex((m) => m.name === 'tau')]![0]).toBeCloseTo(1, 14);
  });
});
