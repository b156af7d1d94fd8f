/**
 * Comparing two runs on small hand-built dumps of an invented hardware store's product search.
 * Expected values are derived by hand in the comments (DCG with gain 2^g − 1 and discount
 * 1/log2(position + 1): common practice, Burges et al. 2005 / Järvelin & Kekäläinen 2002).
 */
import { describe, expect, it } from 'vitest';
import { compareRuns } from '../../extension/engine/compare/compare';
import { matchRuns } from '../../extension/engine/compare/match';
import { queryMovement } from '../../extension/engine/compare/movement';
import { segmentDeltas, segmentSignificance } from '../../extension/engine/compare/segments';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { CancelledError } from '../../extension/engine/errors';
import { buildDump, queryRows, type TestRow } from './dumpBuilder';
import { QUERY_NAMES, seededRandom } from '../reference/random';

const withSegment = (rows: TestRow[], device: string): TestRow[] => rows.map((r) => ({ ...r, segments: { device } }));

// Run A
const runA = buildDump(
  [
    // order d1(2), d2(0), d3(1): DCG@3 = 3/1 + 0 + 1/log2(4) = 3.5; P@1 = 1
    ...withSegment([...queryRows('cordless drill 18v', [2, 0, 1], [0.9, 0.8, 0.1])], 'mobile'),
    // order s3(0), s1(1), s2(1): DCG@3 = 1/log2(3) + 1/2; P@1 = 0
    ...withSegment(queryRows('wood screws 4x40', [1, 1, 0], [0.5, 0.4, 0.9]), 'desktop'),
    // order h1(1), h2(0): DCG@3 = 1; P@1 = 1
    ...withSegment(queryRows('hex key set', [1, 0], [0.9, 0.5]), 'mobile'),
    // nothing relevant: skipped under the default policy
    ...withSegment(queryRows('paint roller 9in', [0, 0], [0.3, 0.2]), 'desktop'),
    ...withSegment(queryRows('sanding discs 120', [1, 0], [0.3, 0.2]), 'desktop'),
  ],
  ['device'],
);
// Run B: same queries except "sanding discs 120" (A only) and "pipe wrench 14in" (B only); rows in another order.
const runB = buildDump([
  ...queryRows('pipe wrench 14in', [1], [0.5]),
  // order h3(3), h2(0), h1(1): DCG@3 = 7 + 0 + 1/2 = 7.5; P@1 = 1. h3 is a new candidate.
  ...queryRows('hex key set', [1, 0, 3], [0.2, 0.5, 0.9]),
  // order d3(1), d1(2), d2(0): DCG@3 = 1 + 3/log2(3); P@1 = 1
  ...queryRows('cordless drill 18v', [2, 0, 1], [0.8, 0.1, 0.9]),
  // order s1, s2, s3: DCG@3 = 1 + 1/log2(3); P@1 = 1
  ...queryRows('wood screws 4x40', [1, 1, 0], [0.9, 0.8, 0.1]),
  ...queryRows('paint roller 9in', [0, 0], [0.2, 0.3]),
]);

const metrics = parseMetricList('dcg@3,p@1');
const log2of3 = Math.log2(3);
const dcgDelta = { drill: 1 + 3 / log2of3 - 3.5, screws: 0.5, hex: 6.5 };

describe('matchRuns', () => {
  it('counts queries on one side only and common queries whose items differ', () => {
    const match = matchRuns(runA, runB);
    expect([match.queriesInA, match.queriesInB]).toEqual([5, 5]);
    expect(match.commonA.length).toBe(4);
    expect([match.onlyInA, match.onlyInB]).toEqual([1, 1]);
    expect(match.onlyInAExamples).toEqual(['sanding discs 120']);
    expect(match.onlyInBExamples).toEqual(['pipe wrench 14in']);
    expect(match.differingItemSets).toBe(1);
    expect(match.differingExamples).toEqual([{ query: 'hex key set', itemsOnlyInA: 0, itemsOnlyInB: 1 }]);
    for (let i = 0; i < match.commonA.length; i++) {
      expect(runB.queries.get(match.commonB[i]!)).toBe(runA.queries.get(match.commonA[i]!));
    }
    expect(match.notes.join(' ')).toMatch(/4 queries present in both/);
  });

  it('counts distinct items, not duplicate rows, and sees items missing on either side', () => {
    const a = buildDump([
      { query: 'tile spacers 3mm', item: 'x', label: 1, score: 1 },
      { query: 'tile spacers 3mm', item: 'x', label: 1, score: 0.5 },
      { query: 'tile spacers 3mm', item: 'y', label: 0, score: 0.4 },
    ]);
    const b = buildDump([
      { query: 'tile spacers 3mm', item: 'z', label: 0, score: 1 },
      { query: 'tile spacers 3mm', item: 'x', label: 1, score: 0.2 },
      { query: 'tile spacers 3mm', item: 'z', label: 0, score: 0.1 },
    ]);
    const match = matchRuns(a, b);
    expect([match.itemsOnlyInA[0], match.itemsOnlyInB[0]]).toEqual([1, 1]);
    expect(match.differingItemSets).toBe(1);
  });
});

describe('compareRuns', () => {
  it('pairs per-query values and derives the deltas (hand-derived)', async () => {
    const c = await compareRuns(runA, runB, metrics, DEFAULT_CONVENTIONS, { permutations: 10_000, bootstrap: 200, seed: 3 });
    const name = (i: number) => runA.queries.get(c.perQuery.queryA[i]!);
    const byName = new Map([...c.perQuery.queryA].map((_, i) => [name(i), i]));
    const drill = byName.get('cordless drill 18v')!;
    expect(c.perQuery.a[0]![drill]).toBeCloseTo(3.5, 12);
    expect(c.perQuery.delta[0]![drill]).toBeCloseTo(dcgDelta.drill, 12);
    expect(c.perQuery.delta[0]![byName.get('wood screws 4x40')!]).toBeCloseTo(dcgDelta.screws, 12);
    expect(c.perQuery.delta[0]![byName.get('hex key set')!]).toBeCloseTo(dcgDelta.hex, 12);
    expect(c.perQuery.delta[0]![byName.get('paint roller 9in')!]).toBeNaN();

    const [dcg, p1] = c.byMetric;
    expect(dcg!.paired).toBe(3);
    expect(dcg!.skipped).toBe(1);
    expect(dcg!.summary.meanDifference).toBeCloseTo((dcgDelta.drill + dcgDelta.screws + dcgDelta.hex) / 3, 12);
    expect(dcg!.summary.meanA).toBeCloseTo((3.5 + 1 / log2of3 + 0.5 + 1) / 3, 12);
    expect([dcg!.summary.wins, dcg!.summary.ties, dcg!.summary.losses]).toEqual([2, 0, 1]);
    // d = (−0.607, 0.5, 6.5), S = 6.393. Of the 8 sign patterns, |S*| ≥ |S| for (±)(+,+,+), (±)(−,+,+),
    // (±)(−,−,+): 6 of 8 -> exact p = 0.75.
    expect(dcg!.randomization.method).toBe('exact');
    expect(dcg!.randomization.p).toBeCloseTo(0.75, 14);
    // P@1 deltas: drill 0, screws +1, hex 0.
    expect([p1!.summary.wins, p1!.summary.ties, p1!.summary.losses]).toEqual([1, 2, 0]);
    expect(p1!.summary.meanDifference).toBeCloseTo(1 / 3, 14);
    // Holm across the two metrics: the larger adjusted value is at least the raw one.
    expect(dcg!.adjusted.randomization.holm).toBeGreaterThanOrEqual(dcg!.randomization.p);
    expect(c.warnings.join(' ')).toMatch(/only in run A/);
    expect(c.warnings.join(' ')).toMatch(/1 common queries have different candidate items/);
    expect(c.warnings.join(' ')).toMatch(/1 common queries are undefined \(skipped\) in at least one run/);
  });

  it('comparing a run with itself gives zero deltas, all ties and p = 1', async () => {
    const c = await compareRuns(runA, runA, metrics, DEFAULT_CONVENTIONS, { bootstrap: 100 });
    for (const r of c.byMetric) {
      expect(r.summary.meanDifference).toBe(0);
      expect(r.summary.ties).toBe(r.paired);
      expect(r.randomization.p).toBe(1);
      expect(r.wilcoxon.p).toBe(1);
      expect(r.interval).toEqual({ low: 0, high: 0 });
    }
  });

  it('is symmetric: swapping the runs negates the deltas and keeps the p-values', async () => {
    const ab = await compareRuns(runA, runB, metrics, DEFAULT_CONVENTIONS, { bootstrap: 100 });
    const ba = await compareRuns(runB, runA, metrics, DEFAULT_CONVENTIONS, { bootstrap: 100 });
    expect(ba.byMetric[0]!.summary.meanDifference).toBeCloseTo(-ab.byMetric[0]!.summary.meanDifference, 12);
    expect(ba.byMetric[0]!.randomization.p).toBeCloseTo(ab.byMetric[0]!.randomization.p, 14);
    expect(ba.byMetric[0]!.tTest.p).toBeCloseTo(ab.byMetric[0]!.tTest.p, 14);
    expect(ba.byMetric[0]!.summary.wins).toBe(ab.byMetric[0]!.summary.losses);
  });

  it('stops when cancelled', async () => {
    const controller = new AbortController();
    controller.abort();
    await expect(compareRuns(runA, runB, metrics, DEFAULT_CONVENTIONS, { signal: controller.signal })).rejects.toBeInstanceOf(CancelledError);
  });
});

describe('compareRuns input checks', () => {
  it('refuses runs without a common query', async () => {
    const other = buildDump(queryRows('garden hose 25m', [1, 0], [0.5, 0.4]));
    await expect(compareRuns(runA, other, metrics, DEFAULT_CONVENTIONS)).rejects.toThrow(/shares at least one query/);
  });

  it("gives ERR one maximum grade for both runs (the higher of the two runs' highest grades)", async () => {
    const low = buildDump(queryRows('cordless drill 18v', [1, 0], [0.9, 0.1]));
    const high = buildDump(queryRows('cordless drill 18v', [1, 0, 4], [0.9, 0.1, 0.05]));
    const c = await compareRuns(low, high, parseMetricList('err@2'), DEFAULT_CONVENTIONS, { bootstrap: 10 });
    expect(c.conventions.maxGrade).toBe(4);
    // ERR@2 of run A with g_max = 4: R = (2^1 − 1)/2^4 = 1/16 at rank 1 (Chapelle et al. 2009).
    expect(c.perQuery.a[0]![0]).toBeCloseTo(1 / 16, 12);
  });
});

describe('segmentDeltas', () => {
  it('splits the paired deltas by the segment value of run A', async () => {
    const c = await compareRuns(runA, runB, metrics, DEFAULT_CONVENTIONS, { bootstrap: 50 });
    const s = segmentDeltas(c, runA, 'device');
    const mobile = s.rows.find((r) => r.value === 'mobile')!;
    const desktop = s.rows.find((r) => r.value === 'desktop')!;
    // mobile: drill and hex; desktop: screws and the skipped paint roller (sanding discs is A-only).
    expect(mobile.queries).toBe(2);
    expect(desktop.queries).toBe(2);
    expect(mobile.metrics[0]!.meanDelta).toBeCloseTo((dcgDelta.drill + dcgDelta.hex) / 2, 12);
    expect(desktop.metrics[0]!.paired).toBe(1);
    expect(desktop.metrics[0]!.meanDelta).toBeCloseTo(0.5, 12);
    expect(s.mixedQueries).toBe(0);
    expect(() => segmentDeltas(c, runA, 'locale')).toThrow(/segment column/);
  });
});

describe('segmentSignificance', () => {
  it('on a column with one value, gives exactly the whole comparison\'s interval and tests (same data, seed and resamples)', async () => {
    // Invariant: a segment holding every paired query is the whole comparison, so its interval and
    // p-values must be bit-identical to the metric row's.
    const allOneValue = buildDump(
      [
        ...withSegment([...queryRows('cordless drill 18v', [2, 0, 1], [0.9, 0.8, 0.1])], 'web'),
        ...withSegment(queryRows('wood screws 4x40', [1, 1, 0], [0.5, 0.4, 0.9]), 'web'),
        ...withSegment(queryRows('hex key set', [1, 0], [0.9, 0.5]), 'web'),
        ...withSegment(queryRows('paint roller 9in', [0, 0], [0.3, 0.2]), 'web'),
      ],
      ['device'],
    );
    const c = await compareRuns(allOneValue, runB, metrics, DEFAULT_CONVENTIONS, { bootstrap: 200, permutations: 500 });
    for (let m = 0; m < metrics.length; m++) {
      const [only] = await segmentSignificance(c, allOneValue, 'device', m);
      const row = c.byMetric[m]!;
      expect(only!.value).toBe('web');
      expect(only!.paired).toBe(row.paired);
      expect(only!.interval).toEqual(row.interval);
      expect(only!.tTest.p).toBe(row.tTest.p);
      expect(only!.randomization.p).toBe(row.randomization.p);
    }
  });

  it('tests each segment on its own paired differences (hand case: mobile pairs drill and hex)', async () => {
    const c = await compareRuns(runA, runB, metrics, DEFAULT_CONVENTIONS, { bootstrap: 100, permutations: 1000 });
    const tests = await segmentSignificance(c, runA, 'device', 0);
    const mobile = tests.find((t) => t.value === 'mobile')!;
    expect(mobile.paired).toBe(2);
    // Two differences, drill 1 + 3/log2(3) − 3.5 ≈ −0.607 and hex +6.5: the four sign patterns sum to
    // ±5.89 and ±7.11, all at least as far from 0 as the observed 5.89, so the exact test gives p = 1.
    expect(mobile.randomization.method).toBe('exact');
    expect(mobile.randomization.p).toBe(1);
    expect(mobile.tTest.dof).toBe(1);
    const desktop = tests.find((t) => t.value === 'desktop')!;
    expect(desktop.paired).toBe(1);
  });
});

describe('queryMovement', () => {
  const id = (dump: typeof runA, name: string) => dump.queries.find(name);

  it('lists moves, fixed and introduced inverted pairs and position contributions (hand-derived)', () => {
    const m = queryMovement(runA, runB, id(runA, 'cordless drill 18v'), id(runB, 'cordless drill 18v'), DEFAULT_CONVENTIONS, 3);
    // B's order d3, d1, d2 against A's d1, d2, d3.
    expect(m.items.map((i) => [i.item, i.positionA, i.positionB, i.change])).toEqual([
      ['i2', 3, 1, 2],
      ['i0', 1, 2, -1],
      ['i1', 2, 3, -1],
    ]);
    // A inverts (d3 grade 1 below d2 grade 0); B inverts (d1 grade 2 below d3 grade 1).
    expect(m.fixedPairs.map((p) => [p.higherGraded, p.lowerGraded])).toEqual([['i2', 'i1']]);
    expect(m.introducedPairs.map((p) => [p.higherGraded, p.lowerGraded])).toEqual([['i0', 'i2']]);
    expect(m.keptPairs).toBe(0);
    // Contributions: A (3, 0, 1/2), B (1, 3/log2(3), 0).
    const expected = [1 - 3, 3 / log2of3 - 0, 0 - 0.5];
    m.positions.forEach((p, i) => expect(p.change).toBeCloseTo(expected[i]!, 12));
    const total = m.positions.reduce((s, p) => s + p.change, 0);
    expect(total).toBeCloseTo(m.dcgB - m.dcgA, 12);
    expect(total).toBeCloseTo(dcgDelta.drill, 12);
  });

  it('marks items present in one run only', () => {
    const m = queryMovement(runA, runB, id(runA, 'hex key set'), id(runB, 'hex key set'), DEFAULT_CONVENTIONS, 3);
    const newItem = m.items.find((i) => i.item === 'i2')!;
    expect(newItem.positionA).toBe(0);
    expect(newItem.positionB).toBe(1);
    expect(newItem.change).toBeNaN();
    // B ranks h2 (grade 0) above h1 (grade 1): introduced.
    expect(m.introducedPairs.map((p) => [p.higherGraded, p.lowerGraded])).toEqual([['i0', 'i1']]);
    expect(m.fixedPairs).toEqual([]);
    expect(m.positions).toHaveLength(3);
    expect(m.positions[2]!.itemA).toBe('');
  });
});

describe('one random stream per metric', () => {
  // 80 invented queries with 6 items each; B's scores are drawn the same way as A's (no real difference), so many
  // sign patterns are as extreme as the observed one. 2^80 patterns: the randomization test samples.
  const random = seededRandom(31);
  const rowsA: TestRow[] = [];
  const rowsB: TestRow[] = [];
  for (let q = 0; q < 80; q++) {
    const grades = Array.from({ length: 6 }, () => (random() < 0.7 ? 0 : Math.floor(random() * 3) + 1));
    const scoresA = grades.map((g) => g * 0.3 + random());
    rowsA.push(...queryRows(`${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}`, grades, scoresA));
    rowsB.push(...queryRows(`${QUERY_NAMES[q % QUERY_NAMES.length]} ${q}`, grades, grades.map((g) => g * 0.3 + random())));
  }
  const a = buildDump(rowsA);
  const b = buildDump(rowsB);
  const options = { permutations: 2000, bootstrap: 400, seed: 7 };
  const of = async (list: string, key: string, seed = options.seed) =>
    (await compareRuns(a, b, parseMetricList(list), DEFAULT_CONVENTIONS, { ...options, seed })).byMetric.find((r) => r.key === key)!;

  it('gives a metric the same randomization p and interval alone, amid other metrics, and in another order', async () => {
    for (const key of ['ap', 'p@5']) {
      const alone = await of(key, key);
      expect(alone.randomization.method).toBe('monte-carlo');
      const amid = await of('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau', key);
      const reordered = await of('tau,p@5,rr,ap,dcg@10,ndcg@3', key);
      for (const other of [amid, reordered]) {
        expect(other.randomization).toEqual(alone.randomization);
        expect(other.interval).toEqual(alone.interval);
      }
    }
  });

  it('still depends on the seed (the sampled results are not fixed by the data alone)', async () => {
    const one = await of('ap', 'ap');
    const otherSeed = await of('ap', 'ap', options.seed + 1);
    expect(one.randomization.asExtreme).toBeGreaterThan(20);
    expect(otherSeed.randomization.asExtreme).not.toBe(one.randomization.asExtreme);
    expect(otherSeed.interval).not.toEqual(one.interval);
  });
});
