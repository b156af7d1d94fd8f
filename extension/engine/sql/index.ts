/**
 * SQL that computes the per-query table of one dump where the data lives (DuckDB, ClickHouse).
 * Pure: builds text only; running it is the caller's business (extension/cli/sqlEngine*.ts).
 */
import { clickhouseSql } from './clickhouse';
import { duckdbSql } from './duckdb';
import { checkExpressible, type SqlRequest } from './request';

export type { SqlDialect, SqlRequest, SqlSource } from './request';
export { COUNT_COLUMNS, metricColumns, NO_ORDER_RULE, SQL_DIALECTS, checkExpressible, sqlDefaultMetrics } from './request';
export { quoteDuck, stringDuck } from './duckdb';
export { CLICKHOUSE_SETTINGS, quoteClickHouse } from './clickhouse';

/** The per-query SELECT: COUNT_COLUMNS then metricColumns(metrics), one row per query. */
export function perQuerySql(request: SqlRequest): string {
  checkExpressible(request.metrics, request.conventions);
  return request.dialect === 'duckdb' ? duckdbSql(request) : clickhouseSql(request);
}
