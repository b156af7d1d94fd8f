/**
 * Seeded random comparison of every per-query number against the slow reference in
 * test/reference/slowMetrics.ts, which works from the definitions and enumerates every ordering of
 * tied groups (the exact McSherry & Najork 2008 expectation, here by brute force).
 */
import { describe, expect, it } from 'vitest';
import { evaluate, gradeRange } from '../../extension/engine/evaluate/evaluate';
import type { Conventions, GainConvention, TieConvention } from '../../extension/engine/metrics/conventions';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { METRIC_DEFINITIONS, metricRange } from '../../extension/engine/metrics/registry';
import { headlineCutoff } from '../../extension/engine/evaluate/scorer';
import { buildDump, type TestRow } from './dumpBuilder';
import { seededRandom, QUERY_NAMES } from '../reference/random';
import { SLOW_REFERENCES, slowQuery, type SlowItem } from '../reference/slowMetrics';

/**
 * Every metric of the registry, on the whole list and at two cut-offs that cut into the random lists
 * (1 to 7 items, many ties), so a new registry entry is checked here without touching this file.
 */
const METRICS = parseMetricList(
  ['ndcg@3', ...METRIC_DEFINITIONS.flatMap((d) => (d.cutoff === 'none' ? [d.name] : [d.name, `${d.name}@2`, `${d.name}@4`]))]
    .filter((key, i, all) => all.indexOf(key) === i)
    .join(','),
);
const GAINS: GainConvention[] = [
  { kind: 'exponential' },
  { kind: 'linear' },
  { kind: 'map', gains: new Map([[0, 0], [1, 1], [2, 4], [3, 5]]) },
  // Not increasing in grade: the ideal order and the swap cost must follow gains, not grades.
  { kind: 'map', gains: new Map([[0, 0], [1, 3], [2, 1], [3, 6]]) },
];
const TIES: TieConvention[] = ['average', 'pessimistic', 'optimistic', 'file-order'];

function randomQueries(seed: number, count: number): Map<string, SlowItem[]> {
  const rand = seededRandom(seed);
  const out = new Map<string, SlowItem[]>();
  for (let q = 0; q < count; q++) {
    const n = 1 + Math.floor(rand() * 7);
    const items: SlowItem[] = [];
    for (let i = 0; i < n; i++) {
      const duplicate = items.length > 0 && rand() < 0.06;
      const item = duplicate ? items[Math.floor(rand() * items.length)]!.item : `sku-${q}-${i}`;
      const label = rand() < 0.1 ? NaN : Math.floor(rand() * 4);
      const score = rand() < 0.08 ? NaN : Math.floor(rand() * 3) / 2;
      items.push({ item, label, score });
    }
    out.set(`${QUERY_NAMES[q % QUERY_NAMES.length]} #${q}`, items);
  }
  return out;
}

function close(actual: number, expected: number, what: string): void {
  if (Number.isNaN(expected)) {
    expect(actual, what).toBeNaN();
    return;
  }
  expect(Math.abs(actual - expected), `${what}: ${actual} vs ${expected}`).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(expected)));
}

describe('evaluate() against the slow reference', () => {
  it('has a slow reference for every metric of the registry, and no other', () => {
    expect(Object.keys(SLOW_REFERENCES).sort()).toEqual(METRIC_DEFINITIONS.map((d) => d.name).sort());
  });

  let seed = 1;
  for (const gain of GAINS) {
    for (const ties of TIES) {
      for (const noRelevant of ['skip', 'zero', 'one'] as const) {
        const relevantFrom = seed % 2 === 0 ? 2 : 1;
        const conventions: Conventions = { ...DEFAULT_CONVENTIONS, gain, ties, noRelevant, relevantFrom, rbpPersistence: 0.7 };
        const caseSeed = seed++;
        it(`gain ${gain.kind}${gain.kind === 'map' ? caseSeed : ''}, ties ${ties}, no relevant ${noRelevant}`, () => {
          const queries = randomQueries(caseSeed, 30);
          const rows: TestRow[] = [];
          for (const [query, items] of queries) for (const it of items) rows.push({ query, ...it });
          const dump = buildDump(rows);
          const evaluation = evaluate(dump, METRICS, conventions);
          const gmax = gradeRange(dump).highest;
          const hk = headlineCutoff(METRICS);
          for (const [query, items] of queries) {
            const q = dump.queries.find(query);
            const slow = slowQuery(items, METRICS, conventions, gmax, hk);
            METRICS.forEach((m, i) => close(evaluation.perQuery.values[i]![q]!, slow.values[m.key]!, `${query} ${m.key}`));
            // Every value lies in the range the registry states (the editor's chart axes rely on it).
            METRICS.forEach((m, i) => {
              const v = evaluation.perQuery.values[i]![q]!;
              const range = metricRange(m);
              if (range && !Number.isNaN(v)) expect(v >= range[0] - 1e-12 && v <= range[1] + 1e-12, `${query} ${m.key} = ${v}`).toBe(true);
            });
            const skipped = slow.noRelevant && noRelevant === 'skip';
            close(evaluation.perQuery.rbpResidual![q]!, slow.values['rbp_residual']!, `${query} rbp_residual`);
            close(evaluation.perQuery.inversions[q]!, skipped ? NaN : slow.discordant, `${query} inversions`);
            close(evaluation.perQuery.inversionCost[q]!, skipped ? NaN : slow.inversionCost, `${query} inversion cost`);
            expect(evaluation.perQuery.skipped[q]).toBe(skipped ? 1 : 0);
          }
        });
      }
    }
  }
});

describe('many distinct grades (the tree-based pair counter) against the slow reference', () => {
  const shuffledGains = new Map(Array.from({ length: 20 }, (_, g) => [g, (g * 7) % 20] as [number, number]));
  const cases: [string, GainConvention, TieConvention][] = [
    ['linear, file order', { kind: 'linear' }, 'file-order'],
    ['linear, pessimistic', { kind: 'linear' }, 'pessimistic'],
    ['exponential, optimistic', { kind: 'exponential' }, 'optimistic'],
    ['gain map not increasing in grade, file order', { kind: 'map', gains: shuffledGains }, 'file-order'],
  ];
  it.each(cases)('%s', (_name, gain, ties) => {
    const rand = seededRandom(77);
    const conventions: Conventions = { ...DEFAULT_CONVENTIONS, gain, ties, noRelevant: 'zero' };
    const rows: TestRow[] = [];
    const queries = new Map<string, SlowItem[]>();
    for (let q = 0; q < 25; q++) {
      const items: SlowItem[] = Array.from({ length: 10 + Math.floor(rand() * 30) }, (_, i) => ({
        item: `sku-${i}`,
        label: Math.floor(rand() * 20) / (gain.kind === 'exponential' ? 4 : 1),
        score: Math.floor(rand() * 25),
      }));
      queries.set(`hinge ${q}`, items);
      for (const it of items) rows.push({ query: `hinge ${q}`, ...it });
    }
    const dump = buildDump(rows);
    const specs = parseMetricList('ndcg@5,tau,ap');
    const evaluation = evaluate(dump, specs, conventions);
    let distinctMax = 0;
    for (const [query, items] of queries) {
      distinctMax = Math.max(distinctMax, new Set(items.map((i) => i.label)).size);
      const q = dump.queries.find(query);
      const slow = slowQuery(items, specs, conventions, gradeRange(dump).highest, 5);
      specs.forEach((m, i) => close(evaluation.perQuery.values[i]![q]!, slow.values[m.key]!, `${query} ${m.key}`));
      close(evaluation.perQuery.inversions[q]!, slow.discordant, `${query} inversions`);
      close(evaluation.perQuery.inversionCost[q]!, slow.inversionCost, `${query} inversion cost`);
    }
    expect(distinctMax).toBeGreaterThan(12);
  });
});
