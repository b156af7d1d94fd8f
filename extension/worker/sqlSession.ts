/**
 * A view whose rows stay where they live: a file served through DuckDB, or a table on a ClickHouse
 * server. The worker holds only the per-query table the engine returned (as an Evaluation) and an open
 * connection; the overview and the worst queries come from that table, and a query's detail fetches
 * that one query's rows with a small SQL query (the id bound, or escaped for the dialect).
 */
import { basename } from 'node:path';
import { InputError } from '../engine/errors';
import { queryDetail } from '../engine/evaluate/detail';
import { headlineCutoff } from '../engine/evaluate/scorer';
import type { Evaluation } from '../engine/evaluate/types';
import { parseMetricList } from '../engine/metrics/parse';
import type { RankedDump } from '../engine/model/dump';
import { ClickHouseTable } from '../engine/sql/clickhouseRunner';
import { DuckDbTable } from '../engine/sql/duckdbRunner';
import type { TableEvaluation } from '../engine/sql/perQueryTable';
import { dumpOfQueryRows } from '../engine/sql/queryRows';
import { sqlDefaultMetrics } from '../engine/sql/request';
import type { FileInfo, OverviewModel, QueryDetailView } from '../protocol/messages';
import type { DumpSource, EvaluationSettings } from '../protocol/worker';
import { QueryTable } from './queryTable';
import { overviewOf } from './viewModels';
import { detailScreen, queryJsonText } from './queryViews';

export interface SqlLoaded {
  readonly kind: 'sql';
  readonly source: DumpSource;
  readonly evaluation: Evaluation;
  readonly gmax: number;
  readonly table: QueryTable;
  readonly connection: DuckDbTable | ClickHouseTable;
  readonly file: FileInfo;
}

/** True when the source is computed by an SQL engine rather than read into memory. */
export function isSqlSource(source: DumpSource): boolean {
  return source.sqlEngine !== undefined;
}

async function open(source: DumpSource): Promise<DuckDbTable | ClickHouseTable> {
  const columns = source.columns as never;
  if (source.sqlEngine === 'clickhouse') {
    return ClickHouseTable.open(source.path, {
      ...(columns ? { columns } : {}),
      ...(source.orderColumn ? { orderColumn: source.orderColumn } : {}),
      ...(source.credentials ? { credentials: source.credentials } : {}),
    });
  }
  const format = source.format;
  if (format !== undefined && format !== 'csv' && format !== 'tsv' && format !== 'parquet') {
    throw new InputError('csv, tsv or parquet for a file opened through DuckDB', source.path, undefined, format);
  }
  return DuckDbTable.open(source.path, source.path, {
    ...(columns ? { columns } : {}),
    ...(format ? { format } : {}),
    ...(source.memoryLimit ? { memoryLimit: source.memoryLimit } : {}),
    ...(source.duckdbModule ? { modulePath: source.duckdbModule } : {}),
  });
}

/**
 * Opens the source and computes its per-query table. Metrics SQL cannot compute exactly are left out of
 * the configured list, and a warning says which (never computed some other way).
 */
export async function loadSql(source: DumpSource, settings: EvaluationSettings, started: number): Promise<{ session: SqlLoaded; overview: OverviewModel }> {
  const connection = await open(source);
  try {
    const wanted = parseMetricList(settings.metrics);
    const metrics = sqlDefaultMetrics(wanted, settings.conventions);
    if (metrics.length === 0) throw new InputError('a metric the SQL engines compute (tau is computed only by the local engine)', 'gainline.metrics', undefined, settings.metrics);
    const result: TableEvaluation & { gmax: number } = await connection.evaluate(metrics, settings.conventions, true);
    const left = wanted.filter((m) => !metrics.includes(m)).map((m) => m.key);
    const notes = left.length > 0 ? [`Left out: ${left.join(', ')} (computed only by the local engine; open the file without an engine for them).`] : [];
    const evaluation = result.evaluation;
    const file: FileInfo = {
      path: source.path,
      name: source.sqlEngine === 'clickhouse' ? source.path.replace(/^clickhouse:\/\/[^/]*\//i, '') : basename(source.path),
      format: source.sqlEngine === 'clickhouse' ? 'clickhouse' : `${source.format ?? (/\.parquet$/i.test(source.path) ? 'parquet' : /\.tsv(\.gz)?$/i.test(source.path) ? 'tsv' : /\.csv(\.gz)?$/i.test(source.path) ? 'csv' : 'parquet')} through DuckDB`,
      rowCount: result.rowCount,
      sizeBytes: 0,
      textual: false,
    };
    const table = new QueryTable({ dump: { queries: result.queryNames, segments: [] }, evaluation });
    const session: SqlLoaded = { kind: 'sql', source, evaluation, gmax: result.gmax, table, connection, file };
    return { session, overview: overviewOf(file, evaluation, notes, performance.now() - started) };
  } catch (e) {
    await connection.close();
    throw e;
  }
}

/** One query's rows from the engine, as a one-query dump, and the query's index in the per-query table. */
async function rowsOf(s: SqlLoaded, query: string): Promise<{ dump: RankedDump; id: number }> {
  const names = s.table.queryNames;
  const id = names.find(query);
  if (id < 0) throw new InputError(`a query id present in ${s.source.path}`, undefined, undefined, query);
  const rows = await s.connection.queryRows(query);
  return { dump: dumpOfQueryRows(rows, s.source.path, 'parquet'), id };
}

function detailOfRows(s: SqlLoaded, dump: RankedDump, id: number, maxPairs: number) {
  const k = headlineCutoff(s.evaluation.metrics);
  // ERR's g_max is the whole table's, as in the per-query SQL, not this query's highest grade.
  const conventions = { ...s.evaluation.conventions, maxGrade: s.evaluation.conventions.maxGrade ?? s.gmax };
  return queryDetail(dump, 0, conventions, Number.isFinite(k) ? k : s.evaluation.perQuery.items[id]!, { maxPairs, metrics: s.evaluation.metrics });
}

export async function sqlQueryDetail(s: SqlLoaded, query: string, maxPairs: number | undefined): Promise<QueryDetailView> {
  const { dump, id } = await rowsOf(s, query);
  return detailScreen(dump, s.evaluation, detailOfRows(s, dump, id, maxPairs ?? 200), id, s.table);
}

export async function sqlQueryJson(s: SqlLoaded, query: string): Promise<string> {
  const { dump, id } = await rowsOf(s, query);
  // The rows live in a database: no line numbers. A one-query dump has no unretrieved judged items.
  return queryJsonText(query, s.source.path, s.evaluation, id, detailOfRows(s, dump, id, 0), () => null);
}
