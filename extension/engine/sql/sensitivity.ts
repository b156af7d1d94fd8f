/**
 * The convention sensitivity rows (evaluate/sensitivity.ts: the headline NDCG@k under each other gain,
 * tie convention and no-relevant policy, one changed at a time) for the SQL engines. Each other gain or
 * tie convention is one more per-query table holding only NDCG@k, computed by the same SQL under those
 * conventions; the no-relevant rows need no SQL (they change only what a query with nothing relevant
 * counts as). Means are summed in the per-query table's order, as the local pass sums in query order.
 */
import { gainProblem } from '../evaluate/gainLimits';
import { noRelevantValue } from '../evaluate/scorer';
import type { SensitivityRow } from '../evaluate/types';
import type { Conventions, GainConvention, NoRelevantPolicy, TieConvention } from '../metrics/conventions';
import { formatGain, parseMetricList } from '../metrics/parse';
import type { MetricSpec } from '../metrics/registry';
import { headlineCutoff } from '../evaluate/scorer';
import type { TableFacts } from './checks';
import type { TableEvaluation } from './perQueryTable';

const TIES: readonly TieConvention[] = ['average', 'pessimistic', 'optimistic', 'file-order'];
const POLICIES: readonly NoRelevantPolicy[] = ['skip', 'zero', 'one'];

/** One per-query table to compute: NDCG@k under these conventions (no-relevant queries left out). */
export interface SensitivityTable {
  readonly conventions: Conventions;
  readonly metric: MetricSpec;
}

export interface SensitivityPlan {
  /** The configured conventions first (its values are recomputed too, with the skip policy). */
  readonly tables: readonly SensitivityTable[];
  readonly unavailable: readonly { gain: GainConvention; why: string }[];
  readonly alternativeGains: readonly GainConvention[];
}

/** Which per-query tables the rows need; `k` is the headline NDCG's cut-off (headlineCutoff). */
export function sensitivityPlan(base: Conventions, k: number, facts: TableFacts): SensitivityPlan {
  const metric = parseMetricList(Number.isFinite(k) ? `ndcg@${k}` : 'ndcg')[0]!;
  const skip = (c: Partial<Conventions>): SensitivityTable => ({ metric, conventions: { ...base, ...c, noRelevant: 'skip' } });
  const seen = new Set([formatGain(base.gain)]);
  const alternativeGains: GainConvention[] = [];
  const unavailable: { gain: GainConvention; why: string }[] = [];
  for (const gain of [{ kind: 'exponential' }, { kind: 'linear' }] as GainConvention[]) {
    if (seen.has(formatGain(gain))) continue;
    seen.add(formatGain(gain));
    const problem = gainProblem(gain, facts.range, facts.rows);
    if (problem) unavailable.push({ gain, why: problem.why });
    else alternativeGains.push(gain);
  }
  const tables = [skip({}), ...alternativeGains.map((gain) => skip({ gain })), ...TIES.filter((t) => t !== base.ties).map((ties) => skip({ ties }))];
  return { tables, unavailable, alternativeGains };
}

/**
 * The rows, in the local pass's order and words. `values[i]` is table i's NDCG@k per query (NaN for a query
 * with nothing relevant or an ideal DCG of 0: neither enters a variant's sum); `noRelevantQueries` counts
 * the queries with nothing relevant under the configured threshold.
 */
export function sensitivityRows(base: Conventions, plan: SensitivityPlan, values: readonly ArrayLike<number>[], noRelevantQueries: number): SensitivityRow[] {
  const sums = values.map((column) => {
    let sum = 0;
    let counted = 0;
    for (let q = 0; q < column.length; q++) {
      const v = column[q]!;
      if (Number.isFinite(v)) {
        sum += v;
        counted++;
      }
    }
    return { sum, counted };
  });
  const mark = (configured: boolean) => (configured ? ' (as configured)' : '');
  const rowOf = (i: number, policy: NoRelevantPolicy, label: string): SensitivityRow => {
    const extra = policy === 'skip' ? 0 : noRelevantQueries;
    const { sum, counted } = sums[i]!;
    const total = counted + extra;
    const conventions = plan.tables[i]!.conventions;
    return {
      label,
      conventions: { ...conventions, noRelevant: policy },
      mean: total > 0 ? (sum + (policy === 'skip' ? 0 : noRelevantValue(policy) * extra)) / total : NaN,
      counted: total,
    };
  };
  const out: SensitivityRow[] = [rowOf(0, base.noRelevant, `gain: ${formatGain(base.gain)}${mark(true)}`)];
  plan.alternativeGains.forEach((gain, i) => out.push(rowOf(1 + i, base.noRelevant, `gain: ${formatGain(gain)}`)));
  for (const u of plan.unavailable) {
    out.push({ label: `gain: ${formatGain(u.gain)}`, conventions: { ...base, gain: u.gain }, mean: NaN, counted: 0, unavailable: `not computed: ${u.why}` });
  }
  const tieStart = 1 + plan.alternativeGains.length;
  let next = tieStart;
  for (const ties of TIES) {
    out.push(ties === base.ties ? rowOf(0, base.noRelevant, `ties: ${ties}${mark(true)}`) : rowOf(next++, base.noRelevant, `ties: ${ties}`));
  }
  for (const p of POLICIES) out.push(rowOf(0, p, `no relevant: ${p}${mark(p === base.noRelevant)}`));
  return out;
}

/** A per-query table's query ids and its one metric column, as an engine returned them. */
export interface SensitivityColumn {
  readonly queries: readonly string[];
  readonly values: readonly number[];
}

/**
 * Adds the sensitivity rows to an SQL engine's evaluation: runs each table of the plan through `run`
 * and lines its values up with the evaluation's queries by id.
 */
export async function addSensitivity(result: TableEvaluation, facts: TableFacts, run: (table: SensitivityTable) => Promise<SensitivityColumn>): Promise<TableEvaluation> {
  const { evaluation, queryNames } = result;
  const base = evaluation.conventions;
  const plan = sensitivityPlan(base, headlineCutoff(evaluation.metrics), facts);
  const values: Float64Array[] = [];
  for (const table of plan.tables) {
    const column = await run(table);
    const aligned = new Float64Array(evaluation.queryCount).fill(NaN);
    column.queries.forEach((q, i) => {
      const id = queryNames.find(q);
      if (id >= 0) aligned[id] = column.values[i]!;
    });
    values.push(aligned);
  }
  const sensitivity = sensitivityRows(base, plan, values, evaluation.degenerate.noRelevantQueries);
  return { ...result, evaluation: { ...evaluation, sensitivity } };
}
