/** The per-query table as columns of plain values, read back from DuckDB or ClickHouse. */
import type { MetricSpec } from '../metrics/registry';
import { COUNT_COLUMNS, metricColumns } from './request';
import type { PerQueryTable } from './perQueryTable';

/** Columns as an SQL engine returns them (COUNT_COLUMNS then metric columns; null for NaN) → PerQueryTable. */
export function tableFromColumns(columns: readonly (readonly unknown[])[], metrics: readonly MetricSpec[]): PerQueryTable {
  const at = (name: (typeof COUNT_COLUMNS)[number]) => columns[COUNT_COLUMNS.indexOf(name)]!.map((v) => Number(v));
  const metricCount = metricColumns(metrics).length;
  const toNumber = (v: unknown) => (v === null || v === undefined ? NaN : Number(v));
  return {
    query: columns[0]!.map(String),
    rows: at('rows'),
    items: at('items'),
    relevant: at('relevant'),
    missingScores: at('missing_scores'),
    unjudged: at('unjudged'),
    tiedRows: at('tied_rows'),
    metrics: Array.from({ length: metricCount }, (_, i) => columns[COUNT_COLUMNS.length + i]!.map(toNumber)),
  };
}
