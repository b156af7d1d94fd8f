/**
 * The per-query table an SQL engine returns, turned into the same Evaluation the local engine gives,
 * so every report format works unchanged. Means, warnings and counts are computed here from the table
 * exactly as evaluate.ts computes them from the dump.
 */
import { InputError } from '../errors';
import { summarise } from '../evaluate/evaluate';
import { headlineCutoff } from '../evaluate/scorer';
import type { DegenerateCounts, Evaluation, MetricSummary, PerQueryColumns } from '../evaluate/types';
import { describeDegenerate } from '../evaluate/warnings';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import { MapStringPool } from '../model/stringPool';
import { metricColumns } from './request';

/** One column per name of COUNT_COLUMNS (after `query`) and of metricColumns, one entry per query. */
export interface PerQueryTable {
  readonly query: readonly string[];
  readonly rows: ArrayLike<number>;
  readonly items: ArrayLike<number>;
  readonly relevant: ArrayLike<number>;
  readonly missingScores: ArrayLike<number>;
  readonly unjudged: ArrayLike<number>;
  readonly tiedRows: ArrayLike<number>;
  /** In metricColumns(metrics) order; NaN (or null turned NaN) where undefined. */
  readonly metrics: readonly ArrayLike<number>[];
}

/** Said in every report an SQL engine computed, so the missing rows are never a surprise. */
export const SQL_ENGINE_NOTE =
  'Computed in SQL: Kendall\'s tau and the inversion counts are left out (the local engine computes them).';

export interface TableEvaluation {
  readonly evaluation: Evaluation;
  readonly queryNames: MapStringPool;
  readonly rowCount: number;
}

/**
 * Builds the Evaluation. A query id twice in the table means the engine split one query's rows (a
 * Distributed table not sharded by query id): refused, never merged.
 */
export function evaluationFromTable(table: PerQueryTable, metrics: readonly MetricSpec[], conventions: Conventions,
  gmax: number, source: string): TableEvaluation {
  const names = new MapStringPool();
  const queryCount = table.query.length;
  for (const q of table.query) {
    if (names.find(q) >= 0) {
      throw new InputError(
        `each query's rows on one shard, but query ${JSON.stringify(q)} came back from more than one (shard the table by a hash of the query id)`,
        source);
    }
    names.intern(q);
  }
  const columnNames = metricColumns(metrics);
  const values: Float64Array[] = [];
  let rbpResidual: Float64Array | undefined;
  columnNames.forEach((name, i) => {
    const column = Float64Array.from(table.metrics[i]!, (v) => (v === null || v === undefined ? NaN : Number(v)));
    if (name.endsWith('_residual')) rbpResidual = column;
    else values.push(column);
  });
  const skipped = new Uint8Array(queryCount);
  const degenerate: DegenerateCounts = {
    singleItemQueries: 0, noRelevantQueries: 0, duplicateRows: 0, missingScoreRows: 0, unjudgedRows: 0, tiedScoreRows: 0,
  };
  let rowCount = 0;
  for (let q = 0; q < queryCount; q++) {
    const items = Number(table.items[q]);
    rowCount += Number(table.rows[q]);
    degenerate.duplicateRows += Number(table.rows[q]) - items;
    degenerate.missingScoreRows += Number(table.missingScores[q]);
    degenerate.unjudgedRows += Number(table.unjudged[q]);
    degenerate.tiedScoreRows += Number(table.tiedRows[q]);
    if (items === 1) degenerate.singleItemQueries++;
    if (Number(table.relevant[q]) === 0) {
      degenerate.noRelevantQueries++;
      if (conventions.noRelevant === 'skip') skipped[q] = 1;
    }
  }
  const perQuery: PerQueryColumns = {
    items: Uint32Array.from(table.items, Number),
    relevant: Uint32Array.from(table.relevant, Number),
    values,
    // Pair measures come with tau, which the SQL engines do not compute (request.ts).
    inversions: new Float64Array(queryCount).fill(NaN),
    inversionCost: new Float64Array(queryCount).fill(NaN),
    skipped,
    ...(rbpResidual ? { rbpResidual } : {}),
  };
  const summary: MetricSummary[] = metrics.map((m, i) => summarise(m.key, values[i]!));
  if (rbpResidual) summary.push(summarise(`${metrics.find((m) => m.name === 'rbp')!.key}_residual`, rbpResidual));
  // The inversion-cost sentence describes a column the SQL engines do not fill.
  const warnings = describeDegenerate({
    conventions, metrics, queryCount, degenerate, emptyQueries: 0, tauUndefined: 0, gmax, headlineK: headlineCutoff(metrics),
  }).filter((w) => !w.startsWith('Inversion cost'));
  warnings.push(SQL_ENGINE_NOTE);
  const evaluation: Evaluation = {
    conventions, metrics, headline: 0, queryCount, perQuery, summary, degenerate, sensitivity: [], warnings,
  };
  return { evaluation, queryNames: names, rowCount };
}
