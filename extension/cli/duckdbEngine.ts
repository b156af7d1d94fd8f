/**
 * `--engine duckdb`: the per-query table computed by DuckDB embedded (npm package @duckdb/node-api),
 * reading CSV, TSV, Parquet or a folder of Parquet parts in place, spilling to a temporary folder
 * past the memory cap. Only the per-query table comes back into this process.
 *
 * The package is a native module: it is loaded here, at use, and left out of the bundles (build.mjs),
 * so the command line starts without it and the editor extension never loads it.
 */
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { InputError } from '../engine/errors';
import type { Conventions } from '../engine/metrics/conventions';
import type { MetricSpec } from '../engine/metrics/registry';
import { checkTable } from '../engine/sql/checks';
import { resolveRoles, type ColumnRoles } from '../engine/readers/roles';
import { checkExpressible, perQuerySql, quoteDuck, stringDuck, type SqlSource } from '../engine/sql/index';
import { evaluationFromTable, type TableEvaluation } from '../engine/sql/perQueryTable';
import { tableFromColumns } from './tableColumns';

export interface DuckDbOptions {
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  readonly columns?: ColumnRoles;
  readonly format?: string;
  /** DuckDB's memory_limit, e.g. "2GB". */
  readonly memoryLimit?: string;
  readonly threads?: number;
}

/** Columns the source relation adds for row order; never taken for a role. */
const ORDER_COLUMNS = new Set(['__gainline_row', 'file_row_number']);

type Connection = {
  runAndReadAll(sql: string): Promise<{ getColumnsJS(): unknown[][]; getRowsJS(): unknown[][] }>;
  closeSync?(): void;
};

async function loadDuckDb(): Promise<{ DuckDBInstance: { create(path: string, options: Record<string, string>): Promise<{ connect(): Promise<Connection>; closeSync?(): void }> } }> {
  try {
    return (await import('@duckdb/node-api')) as never;
  } catch {
    throw new InputError('the npm package @duckdb/node-api installed next to gainline (npm install @duckdb/node-api)', '--engine duckdb');
  }
}

/** The relation DuckDB reads for a path, with the expressions giving file order. */
export async function duckSourceRelation(path: string, format: string | undefined): Promise<{ relation: string; order: string[] }> {
  const info = await stat(path);
  const lower = path.toLowerCase();
  const kind = format ?? (info.isDirectory() || /\.parquet$/.test(lower) ? 'parquet' : /\.tsv(\.gz)?$/.test(lower) ? 'tsv' : /\.csv(\.gz)?$/.test(lower) ? 'csv' : undefined);
  if (kind === 'parquet') {
    // A folder: every .parquet part under it, in file name order, then row order within each part.
    const glob = info.isDirectory() ? join(path, '**', '*.parquet') : path;
    // file_index follows the sorted file names; one number per row keeps the repeated-row aggregate spillable.
    return { relation: `read_parquet(${stringDuck(glob)}, file_row_number = true)`, order: ['(file_index * 1099511627776 + file_row_number)'] };
  }
  if (kind === 'csv' || kind === 'tsv') {
    // Every field as text so ids keep their spelling ("007" stays "007"); numbers are cast where used.
    // row_number() OVER () follows the scan order, which DuckDB keeps with preserve_insertion_order.
    const delim = kind === 'tsv' ? '\\t' : ',';
    return {
      relation: `(SELECT *, row_number() OVER () AS __gainline_row FROM read_csv(${stringDuck(path)}, all_varchar = true, header = true, delim = ${stringDuck(delim)}))`,
      order: ['__gainline_row'],
    };
  }
  throw new InputError('a CSV, TSV or Parquet file, or a folder of Parquet parts, for --engine duckdb (or --input-format csv|tsv|parquet)', path);
}

/** First line of a DuckDB error, as an input problem of `path`. */
function asInputError(e: unknown, path: string): never {
  if (e instanceof InputError) throw e;
  const text = e instanceof Error ? e.message : String(e);
  throw new InputError(`input DuckDB can read (${text.split('\n')[0]!.trim()})`, path);
}

export async function evaluateWithDuckDb(path: string, source: string, options: DuckDbOptions): Promise<TableEvaluation & { gmax: number }> {
  checkExpressible(options.metrics, options.conventions);
  const { DuckDBInstance } = await loadDuckDb();
  const spill = await mkdtemp(join(tmpdir(), 'gainline-duckdb-'));
  const settings: Record<string, string> = { preserve_insertion_order: 'true', temp_directory: spill };
  if (options.memoryLimit !== undefined) settings.memory_limit = options.memoryLimit;
  if (options.threads !== undefined) settings.threads = String(options.threads);
  let instance: Awaited<ReturnType<typeof DuckDBInstance.create>>;
  try {
    instance = await DuckDBInstance.create(':memory:', settings);
  } catch (e) {
    await rm(spill, { recursive: true, force: true });
    throw new InputError(`a DuckDB setting it accepts (${(e instanceof Error ? e.message : String(e)).split('\n')[0]})`, '--memory-limit', undefined, options.memoryLimit);
  }
  try {
    const connection = await instance.connect();
    const run = async (sql: string) => {
      try {
        return await connection.runAndReadAll(sql);
      } catch (e) {
        return asInputError(e, source);
      }
    };
    const { relation, order } = await duckSourceRelation(path, options.format);
    const described = await run(`DESCRIBE SELECT * FROM ${relation}`);
    const names = described.getColumnsJS()[0]!.map(String).filter((n) => !ORDER_COLUMNS.has(n));
    const roles = resolveRoles(names, options.columns, { file: source, line: 1, text: names.join(',') });
    if (roles.score < 0) throw new InputError('a score column (the SQL engines rank by score, not by a rank column)', source);
    const col = (i: number) => quoteDuck(names[i]!);
    const sqlSource: SqlSource = { relation, query: col(roles.query), item: col(roles.item), score: col(roles.score), label: col(roles.label), order };
    const gmax = await checkGrades(run, sqlSource, options, source);
    const sql = perQuerySql({ dialect: 'duckdb', source: sqlSource, metrics: options.metrics, conventions: options.conventions, gmax });
    const columns = (await run(sql)).getColumnsJS();
    const table = tableFromColumns(columns, options.metrics);
    return { ...evaluationFromTable(table, options.metrics, options.conventions, gmax, source), gmax };
  } finally {
    instance.closeSync?.();
    await rm(spill, { recursive: true, force: true });
  }
}

/** The checks evaluate.ts makes before scoring, from the grade range the database reports; returns ERR's g_max. */
async function checkGrades(run: (sql: string) => Promise<{ getRowsJS(): unknown[][] }>, src: SqlSource, options: DuckDbOptions, source: string): Promise<number> {
  const c = options.conventions;
  const label = `CAST(${src.label} AS DOUBLE)`;
  const grade = `CASE WHEN ${label} IS NULL OR isnan(${label}) THEN 0.0 ELSE ${label} END`;
  const known = c.gain.kind === 'map' ? [...c.gain.gains.keys()] : [];
  const unknown = c.gain.kind === 'map' ? `min(g) FILTER (WHERE g NOT IN (${known.map((k) => String(k)).join(', ')}))` : 'NULL';
  const row = (await run(`SELECT min(g), max(g), ${unknown}, count(*) FROM (SELECT ${grade} AS g FROM ${src.relation})`)).getRowsJS()[0]!;
  const range = { lowest: row[0] === null ? 0 : Number(row[0]), highest: row[1] === null ? 0 : Number(row[1]) };
  const unmappedGrade = row[2] === null || row[2] === undefined ? undefined : Number(row[2]);
  return checkTable({ range, rows: Number(row[3]), ...(unmappedGrade !== undefined ? { unmappedGrade } : {}) }, options.metrics, c, source);
}
