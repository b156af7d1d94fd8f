/**
 * The overview's convention sensitivity rows, computed after its headline. Scoring with them costs
 * more than without (every alternative gain, tie and no-relevant convention revisits each query's top
 * slots), and the first screen needs only the means; so a view's load scores without them and the
 * overview asks for them once its headline is painted. The rows need only the metric that fixes the
 * headline cut-off (the first NDCG, as `headlineCutoff` finds it), so the second pass scores that one
 * metric alone; test/worker/sensitivityLater.test.ts checks the rows equal the one-pass rows bit for bit.
 */
import { evaluateDump } from '../engine/index';
import type { Conventions } from '../engine/metrics/conventions';
import { parseMetricList } from '../engine/metrics/parse';
import { headlineCutoff } from '../engine/evaluate/scorer';
import type { MetricSpec } from '../engine/metrics/registry';
import type { RankedDump } from '../engine/model/dump';
import type { QueryGroups } from '../engine/model/groups';
import type { Evaluation } from '../engine/evaluate/types';
import type { SensitivityView } from '../protocol/messages';
import { sensitivityRows } from './viewModels';

/** The one metric whose cut-off the sensitivity rows use: NDCG at the headline cut-off (scorer.ts headlineCutoff). */
export function sensitivityMetrics(metrics: readonly MetricSpec[]): MetricSpec[] {
  const k = headlineCutoff(metrics);
  return parseMetricList(Number.isFinite(k) ? `ndcg@${k}` : 'ndcg');
}

/**
 * The rows for a dump scored without them (`evaluation`, with `conventions` as given to that scoring),
 * Δ against that evaluation's headline mean, as the one-pass overview gives them.
 */
export async function sensitivityLater(dump: RankedDump, groups: QueryGroups, evaluation: Evaluation, conventions: Conventions,
  signal?: AbortSignal): Promise<SensitivityView[]> {
  const rows = await evaluateDump(dump, sensitivityMetrics(evaluation.metrics), conventions, { groups, ...(signal ? { signal } : {}) });
  return sensitivityRows(rows, evaluation.summary[evaluation.headline]?.mean ?? NaN);
}
