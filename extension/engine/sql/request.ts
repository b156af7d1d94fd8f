/**
 * What the SQL generator is asked for, and which metrics SQL can compute exactly.
 *
 * The generated query returns one row per query with the same per-query numbers the local engine
 * computes (extension/engine/evaluate): the SQL is checked against it to 1e-9 per query. Metrics whose
 * exact value SQL cannot express are refused here, before any SQL is written, never approximated.
 */
import { InputError } from '../errors';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';

export type SqlDialect = 'duckdb' | 'clickhouse';
export const SQL_DIALECTS: readonly SqlDialect[] = ['duckdb', 'clickhouse'];

/** Where the rows are and which column plays which part. */
export interface SqlSource {
  /** A relation: a table name or a parenthesised SELECT / table function call, already valid in the dialect. */
  readonly relation: string;
  readonly query: string;
  readonly item: string;
  readonly score: string;
  /** Graded judgment; NULL or NaN = unjudged (counts as grade 0, as in the local engine). */
  readonly label: string;
  /**
   * Expressions that give the rows' order in the file, compared left to right (row number; or part file
   * name, then row number). Empty when the table has no order: then the rule of NO_ORDER_RULE applies.
   */
  readonly order: readonly string[];
}

/**
 * The stated rule for a table without a row order (a database table usually has none): rows are taken in
 * ascending item id order, then ascending score (a missing score lowest), then ascending grade. So of
 * repeated (query, item) rows the one with the lowest score is ranked, and "file order" within tied
 * scores means item id order.
 */
export const NO_ORDER_RULE =
  'without a row-order column, repeated (query, item) rows keep the one with the lowest score (then lowest grade), and file order among tied scores means item id order';

export interface SqlRequest {
  readonly dialect: SqlDialect;
  readonly source: SqlSource;
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  /** ERR's g_max; when undefined, conventions.maxGrade, else the highest grade in the table (a subquery). */
  readonly gmax?: number;
}

/** Columns of the per-query table, in this order, before the metric columns. */
export const COUNT_COLUMNS = ['query', 'rows', 'items', 'relevant', 'missing_scores', 'unjudged', 'tied_rows'] as const;

/** Metric columns (keys as written) and RBP's residual after the first RBP metric's column. */
export function metricColumns(metrics: readonly MetricSpec[]): string[] {
  const out: string[] = [];
  const firstRbp = metrics.findIndex((m) => m.name === 'rbp');
  metrics.forEach((m, i) => {
    out.push(m.key);
    if (i === firstRbp) out.push(`${m.key}_residual`);
  });
  return out;
}

/**
 * The metrics an SQL engine computes when none are named: the local default list less what SQL cannot
 * compute exactly under these conventions (tau always, ERR under average ties).
 */
export function sqlDefaultMetrics(defaults: readonly MetricSpec[], conventions: Conventions): MetricSpec[] {
  return defaults.filter((m) => m.name !== 'tau' && !(m.name === 'err' && conventions.ties === 'average'));
}

/**
 * Refuses what SQL cannot compute exactly, with the reason, naming the option to change.
 * - Kendall's tau needs a count of discordant pairs (two items ordered one way by score and the other by
 *   grade); neither dialect has an exact set form for it short of a quadratic self-join per query.
 * - ERR under `average` ties is an expectation over all orders of each tied group (elementary symmetric
 *   sums of the stop probabilities, see metrics/err.ts), a recurrence SQL has no exact form for.
 */
export function checkExpressible(metrics: readonly MetricSpec[], conventions: Conventions): void {
  for (const m of metrics) {
    if (m.name === 'tau') {
      throw new InputError(
        "a metric the SQL engines compute exactly; Kendall's tau (a count of discordant pairs) is computed only by the local engine: drop tau from --metrics",
        '--metrics', undefined, m.key);
    }
    if (m.name === 'err' && conventions.ties === 'average') {
      throw new InputError(
        `${m.key} with --ties file-order, pessimistic or optimistic; under average ties ERR's exact expectation is computed only by the local engine`,
        '--metrics', undefined, m.key);
    }
  }
}
