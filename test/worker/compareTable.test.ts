/** Compare-mode table and the plain-JSON view models, against slow obviously-correct versions. */
import { describe, expect, it } from 'vitest';
import { compareRuns } from '../../extension/engine/compare/compare';
import { emptyNotes, type RankedDump } from '../../extension/engine/model/dump';
import { MapStringPool } from '../../extension/engine/model/stringPool';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { CompareTable, outcomeOf } from '../../extension/worker/compareTable';
import { conventionsView, histogram, metricLabel } from '../../extension/worker/viewModels';
import { metricRange } from '../../extension/engine/metrics/registry';
import { seededRandom } from '../reference/random';

const WORDS = ['drill', 'screws', 'hammer', 'hose', 'ladder', 'paint', 'hinge', 'sealant'];

/** Two runs over the same invented queries and items; B's scores are A's plus noise. */
function runs(queryCount: number, seed: number): [RankedDump, RankedDump] {
  const random = seededRandom(seed);
  const grades: number[][] = [];
  const make = (noise: number): RankedDump => {
    const queries = new MapStringPool();
    const items = new MapStringPool();
    const aisles = new MapStringPool();
    const q: number[] = [], it: number[] = [], label: number[] = [], score: number[] = [], aisle: number[] = [];
    for (let i = 0; i < queryCount; i++) {
      const name = `${WORDS[i % WORDS.length]} ${i}`;
      grades[i] ??= Array.from({ length: 6 }, () => Math.floor(random() * 3));
      for (let j = 0; j < 6; j++) {
        q.push(queries.intern(name));
        it.push(items.intern(`sku-${i}-${j}`));
        label.push(grades[i]![j]!);
        // Coarse scores so some queries tie exactly between runs.
        score.push(Math.round((grades[i]![j]! + noise * (random() - 0.5)) * 2) / 2);
        aisle.push(aisles.intern(i % 3 === 0 ? 'garden' : 'tools'));
      }
    }
    const n = q.length;
    return {
      path: `run-${noise}.csv`, format: 'csv', stamp: { size: 0, mtimeMs: 0 }, rowCount: n,
      query: Uint32Array.from(q), item: Uint32Array.from(it), label: Float64Array.from(label), score: Float64Array.from(score),
      line: Uint32Array.from({ length: n }, (_, r) => r + 2), offset: new Float64Array(n), queries, items,
      segments: [{ name: 'aisle', values: aisles, ofRow: Uint32Array.from(aisle) }], notes: emptyNotes(),
    };
  };
  return [make(4), make(2)];
}

describe('CompareTable', () => {
  it('agrees with a slow filter+sort for random metrics, sorts, outcomes and segments (seeded)', async () => {
    const [a, b] = runs(120, 11);
    const metrics = parseMetricList('ndcg@5,ap');
    const comparison = await compareRuns(a, b, metrics, DEFAULT_CONVENTIONS, { permutations: 200, bootstrap: 0, seed: 1, tieTolerance: 1e-9 });
    const table = new CompareTable(comparison, a);
    const random = seededRandom(5);
    for (let trial = 0; trial < 40; trial++) {
      const metric = random() < 0.5 ? 'ndcg@5' : 'ap';
      const key = (['delta', 'a', 'b'] as const)[Math.floor(random() * 3)]!;
      const descending = random() < 0.5;
      const outcome = random() < 0.4 ? (['win', 'tie', 'loss'] as const)[trial % 3] : undefined;
      const segment = random() < 0.3 ? { column: 'aisle', value: 'garden' } : undefined;
      const filter = random() < 0.3 ? WORDS[trial % WORDS.length] : undefined;
      const page = table.page({ metric, sort: { key, descending }, outcome, segment, filter, offset: 3, limit: 20 });

      const m = metrics.findIndex((s) => s.key === metric);
      const pq = comparison.perQuery;
      const value = (i: number) => (key === 'a' ? pq.a[m]![i]! : key === 'b' ? pq.b[m]![i]! : pq.delta[m]![i]!);
      const name = (i: number) => a.queries.get(pq.queryA[i]!);
      const all = Array.from({ length: pq.queryA.length }, (_, i) => i).filter((i) => {
        const d = pq.delta[m]![i]!;
        if (outcome && outcomeOf(d, 1e-9) !== outcome) return false;
        if (segment && (Number(name(i).split(' ')[1]) % 3 === 0 ? 'garden' : 'tools') !== segment.value) return false;
        if (filter && !name(i).includes(filter)) return false;
        return true;
      });
      const present = all.filter((i) => Number.isFinite(value(i))).sort((x, y) => (descending ? value(y) - value(x) : value(x) - value(y)) || x - y);
      const expected = [...present, ...all.filter((i) => !Number.isFinite(value(i)))].slice(3, 23).map(name);
      expect(page.total).toBe(all.length);
      expect(page.rows.map((r) => r.query)).toEqual(expected);
      for (const row of page.rows) {
        if (row.delta !== null) expect(row.delta).toBeCloseTo((row.b ?? NaN) - (row.a ?? NaN), 12);
      }
    }
  });

  it('segment rows add up to the paired queries, and wins+ties+losses to the counted ones', async () => {
    const [a, b] = runs(60, 3);
    const comparison = await compareRuns(a, b, parseMetricList('ndcg@5'), DEFAULT_CONVENTIONS, { permutations: 100, bootstrap: 0, seed: 1, tieTolerance: 1e-9 });
    const segments = await new CompareTable(comparison, a).segments('aisle', undefined);
    expect(segments.rows.reduce((s, r) => s + r.queries, 0)).toBe(comparison.perQuery.queryA.length);
    const counted = segments.rows.reduce((s, r) => s + r.wins + r.ties + r.losses, 0);
    expect(counted).toBe(comparison.byMetric[0]!.paired);
    // Each segment: its wins, ties and losses plus its skipped queries are all its queries.
    for (const r of segments.rows) expect(r.wins + r.ties + r.losses + r.skipped).toBe(r.queries);
    expect(segments.rows.reduce((s, r) => s + r.skipped, 0)).toBe(comparison.byMetric[0]!.skipped);
  });
});

describe('view models', () => {
  it('labels metrics the way the trade writes them', () => {
    expect(parseMetricList('ndcg@10,err@10,ap,rr,p@5,r@10,rbp,tau').map(metricLabel)).toEqual([
      'NDCG@10', 'ERR@10', 'AP', 'RR', 'P@5', 'R@10', 'RBP', "Kendall's τ",
    ]);
  });

  it('bins the headline into ten bins with 1.0 in the last and skipped queries left out', () => {
    const h = histogram(Float64Array.of(0, 0.05, 0.1, 0.95, 1, NaN, 1.7), [0, 1]);
    expect(h.counts).toEqual([2, 1, 0, 0, 0, 0, 0, 0, 0, 3]);
  });

  it('bins over the metric\'s range from the registry: tau over [-1, 1], DCG over the data', () => {
    // Bins of width 0.2 from -1: -0.05 falls in [-0.2, 0), 0 in [0, 0.2), 1 in the last (closed) bin.
    const tau = histogram(Float64Array.of(-1, -0.05, 0, 1), metricRange(parseMetricList('tau')[0]!));
    expect(tau).toEqual({ lower: -1, upper: 1, counts: [1, 0, 0, 0, 1, 1, 0, 0, 0, 1] });
    expect(metricRange(parseMetricList('dcg@10')[0]!)).toBeUndefined();
    const dcg = histogram(Float64Array.of(0, 2.5, 5, NaN));
    expect(dcg).toEqual({ lower: 0, upper: 5, counts: [1, 0, 0, 0, 0, 1, 0, 0, 0, 1] });
    expect(histogram(Float64Array.of(0, 0))).toEqual({ lower: 0, upper: 1, counts: [2, 0, 0, 0, 0, 0, 0, 0, 0, 0] });
  });

  it('describes a gain map in order and turns Maps into plain JSON', () => {
    const view = conventionsView({ ...DEFAULT_CONVENTIONS, gain: { kind: 'map', gains: new Map([[2, 3], [0, 0], [1, 1]]) } });
    expect(view.gain).toBe('map 0=0,1=1,2=3'); // the conventions line's wording (presentation module)
    expect(JSON.parse(JSON.stringify(view))).toEqual(view);
    expect(view.maxGrade).toBeNull();
  });
});
