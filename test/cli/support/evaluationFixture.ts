// A hand-built evaluation of three invented product-search queries, so report tests do not depend
// on the metric code: every number below is chosen, not computed.
import type { Evaluation } from '../../../extension/engine/evaluate/types';
import { DEFAULT_CONVENTIONS } from '../../../extension/engine/metrics/conventions';
import { type MetricSpec } from '../../../extension/engine/metrics/registry';
import { MapStringPool } from '../../../extension/engine/model/stringPool';
import type { ReportInput } from '../../../extension/engine/report/reportInput';

export const FIXTURE_QUERIES = ['cordless drill 18v', 'wood screws, "4x40"', 'pvc pipe 32mm|elbow'];

export function fixtureInput(overrides: Partial<Evaluation> = {}, withResidual = true): ReportInput {
  const metrics: MetricSpec[] = [
    { name: 'ndcg', k: 10, key: 'ndcg@10' },
    { name: 'ap', key: 'ap' },
    { name: 'rbp', key: 'rbp' },
    { name: 'tau', key: 'tau' },
  ];
  const perQuery = {
    items: Uint32Array.from([5, 3, 4]),
    relevant: Uint32Array.from([2, 0, 1]),
    values: [
      Float64Array.from([0.75, NaN, 0.5]),
      Float64Array.from([0.8, NaN, 0.25]),
      Float64Array.from([0.36, 0, 0.2]),
      Float64Array.from([0.4, NaN, -1 / 3]),
    ],
    inversions: Float64Array.from([2, 0, 3]),
    inversionCost: Float64Array.from([0.1, 0, 0.4]),
    skipped: Uint8Array.from([0, 1, 0]),
    ...(withResidual ? { rbpResidual: Float64Array.from([0.32768, 0.512, 0.4096]) } : {}),
  };
  const evaluation: Evaluation = {
    conventions: DEFAULT_CONVENTIONS,
    metrics,
    headline: 0,
    queryCount: 3,
    perQuery,
    summary: [
      { key: 'ndcg@10', mean: 0.625, counted: 2 },
      { key: 'ap', mean: 0.525, counted: 2 },
      { key: 'rbp', mean: 0.28, counted: 2 },
      { key: 'tau', mean: 0.0333333333, counted: 2 },
    ],
    degenerate: { singleItemQueries: 0, noRelevantQueries: 1, duplicateRows: 1, missingScoreRows: 0, unjudgedRows: 0, tiedScoreRows: 2 },
    sensitivity: [
      { label: 'gain: linear', conventions: { ...DEFAULT_CONVENTIONS, gain: { kind: 'linear' } }, mean: 0.7, counted: 2 },
      { label: 'no relevant: zero', conventions: { ...DEFAULT_CONVENTIONS, noRelevant: 'zero' }, mean: 0.4166666667, counted: 3 },
    ],
    warnings: ['1 query has no relevant item; skipped from means.', '1 duplicate row; the first was kept.'],
    ...overrides,
  };
  const names = new MapStringPool();
  for (const q of FIXTURE_QUERIES) names.intern(q);
  return { evaluation, queryNames: names, source: 'runs/store-search.csv', rowCount: 13 };
}
