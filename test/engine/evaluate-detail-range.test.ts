/**
 * queryDetail and queryMovement given the grade range computed once at load must answer exactly as
 * when they scan the dump themselves: same positions, values, pairs, and the same errors.
 */
import { describe, expect, it } from 'vitest';
import { queryMovement } from '../../extension/engine/compare/movement';
import { queryDetail } from '../../extension/engine/evaluate/detail';
import { gradeRange } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS, type Conventions } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import type { RankedDump } from '../../extension/engine/model/dump';
import { groupByQuery } from '../../extension/engine/model/groups';
import { QUERY_NAMES, seededRandom } from '../reference/random';
import { buildDump, type TestRow } from './dumpBuilder';

/** Queries of 1..9 items; some unjudged grades, tied and missing scores; grades from `lowest` to 4. */
function randomDump(seed: number, queries: number, lowest = 0, scoreShift = 0): RankedDump {
  const rand = seededRandom(seed);
  const rows: TestRow[] = [];
  for (let q = 0; q < queries; q++) {
    const n = 1 + Math.floor(rand() * 9);
    for (let i = 0; i < n; i++) {
      const label = rand() < 0.1 ? NaN : lowest + Math.floor(rand() * (5 - lowest));
      const score = rand() < 0.05 ? NaN : Math.floor(rand() * 4) / 3 + scoreShift * rand();
      rows.push({ query: `${QUERY_NAMES[q % QUERY_NAMES.length]} #${q}`, item: `sku-${q}-${i}`, label, score });
    }
  }
  return buildDump(rows);
}

const CONVENTIONS: Conventions[] = [
  DEFAULT_CONVENTIONS,
  { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' }, ties: 'pessimistic', noRelevant: 'zero', relevantFrom: 2 },
  { ...DEFAULT_CONVENTIONS, ties: 'file-order', noRelevant: 'one', maxGrade: 6, rbpPersistence: 0.6 },
];

function messageOf(run: () => unknown): string {
  try {
    run();
  } catch (e) {
    return (e as Error).message;
  }
  return 'no error';
}

describe('queryDetail with a known grade range', () => {
  CONVENTIONS.forEach((conventions, c) => {
    it(`answers exactly as without it (seeded dumps, conventions #${c})`, () => {
      for (const seed of [11, 12, 13]) {
        const dump = randomDump(seed * 10 + c, 40);
        const range = gradeRange(dump);
        const groups = groupByQuery(dump);
        for (let q = 0; q < dump.queries.size; q++) {
          for (const k of [3, 10, Infinity]) {
            const scanned = queryDetail(dump, q, conventions, k, { groups });
            const known = queryDetail(dump, q, conventions, k, { groups, gradeRange: range });
            expect(known).toEqual(scanned);
          }
        }
      }
    });
  });

  it('uses the range it is given (so the comparison above can fail)', () => {
    // ERR's g_max defaults to the dump's highest grade; claiming a higher one lowers every stop
    // probability (2^g − 1) / 2^gmax, so ERR must change for a query with a relevant item.
    const dump = buildDump([
      { query: 'cordless drill 18v', item: 'sku-1', label: 2, score: 0.9 },
      { query: 'cordless drill 18v', item: 'sku-2', label: 0, score: 0.1 },
    ]);
    const metrics = parseMetricList('err@2');
    const scanned = queryDetail(dump, 0, DEFAULT_CONVENTIONS, 2, { metrics });
    const claimed = queryDetail(dump, 0, DEFAULT_CONVENTIONS, 2, { metrics, gradeRange: { lowest: 0, highest: 3 } });
    // Hand-derived: g_max 2 → R = (2^2 − 1)/2^2 = 0.75; g_max 3 → R = 3/8 = 0.375 (ERR at rank 1 = R).
    expect(scanned.values['err@2']).toBeCloseTo(0.75, 12);
    expect(claimed.values['err@2']).toBeCloseTo(0.375, 12);
  });

  it('throws the same errors as a full scan', () => {
    // Negative grades under exponential gain, and grades above the ERR maximum.
    const negative = randomDump(5, 12, -2);
    const tooHigh = randomDump(6, 12);
    const cases: [RankedDump, Conventions][] = [
      [negative, DEFAULT_CONVENTIONS],
      [tooHigh, { ...DEFAULT_CONVENTIONS, maxGrade: 2 }],
      [tooHigh, { ...DEFAULT_CONVENTIONS, rbpPersistence: 1 }],
    ];
    for (const [dump, conventions] of cases) {
      const scanned = messageOf(() => queryDetail(dump, 0, conventions, 10));
      const known = messageOf(() => queryDetail(dump, 0, conventions, 10, { gradeRange: gradeRange(dump) }));
      expect(scanned).not.toBe('no error');
      expect(known).toBe(scanned);
    }
  });
});

describe('queryMovement with the runs’ groups and grade ranges', () => {
  it('answers exactly as without them', () => {
    const a = randomDump(21, 30);
    // Same queries and items, other scores: the same seed draws the same rows, shifted scores reorder them.
    const b = randomDump(21, 30, 0, 0.9);
    const known = {
      a: { groups: groupByQuery(a), gradeRange: gradeRange(a) },
      b: { groups: groupByQuery(b), gradeRange: gradeRange(b) },
    };
    const conventions = { ...DEFAULT_CONVENTIONS, maxGrade: Math.max(gradeRange(a).highest, gradeRange(b).highest) };
    let moved = 0;
    for (let q = 0; q < a.queries.size; q++) {
      const qb = b.queries.find(a.queries.get(q));
      const plain = queryMovement(a, b, q, qb, conventions, 5);
      expect(queryMovement(a, b, q, qb, conventions, 5, known)).toEqual(plain);
      moved += plain.items.filter((m) => m.change !== 0).length;
    }
    expect(moved).toBeGreaterThan(0);
  });
});
