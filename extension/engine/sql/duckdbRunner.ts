/**
 * `--engine duckdb`: the per-query table computed by DuckDB embedded (npm package @duckdb/node-api),
 * reading CSV, TSV, Parquet or a folder of Parquet parts in place, spilling to a temporary folder
 * past the memory cap. Only the per-query table comes back into this process; the editor's query
 * detail asks for one query's rows (a bound parameter, never text pasted into the SQL).
 *
 * The package is a native module: it is loaded here, at use, and left out of the bundles (build.mjs).
 * The editor, whose package ships no node_modules, names the installed package's folder (a setting).
 */
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { InputError } from '../errors';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import { resolveRoles, type ColumnRoles } from '../readers/roles';
import { checkTable, type TableFacts } from './checks';
import { perQuerySql, quoteDuck, stringDuck } from './index';
import { evaluationFromTable, type TableEvaluation } from './perQueryTable';
import { checkExpressible, COUNT_COLUMNS, type SqlSource } from './request';
import { addSensitivity } from './sensitivity';
import type { QueryRows } from './queryRows';
import { tableFromColumns } from './tableColumns';

export interface DuckDbOpenOptions {
  readonly columns?: ColumnRoles;
  readonly format?: string;
  /** DuckDB's memory_limit, e.g. "2GB". */
  readonly memoryLimit?: string;
  readonly threads?: number;
  /** Folder of an installed @duckdb/node-api, when the running bundle cannot resolve the package itself. */
  readonly modulePath?: string;
}

export interface DuckDbOptions extends DuckDbOpenOptions {
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  /** Also the convention sensitivity rows (one more per-query table per other gain or tie convention). */
  readonly sensitivity?: boolean;
}

/** Columns the source relation adds for row order; never taken for a role. */
const ORDER_COLUMNS = new Set(['__gainline_row', 'file_row_number', 'file_index']);

type Reader = { getColumnsJS(): unknown[][]; getRowsJS(): unknown[][] };
type Connection = { runAndReadAll(sql: string, values?: unknown[]): Promise<Reader>; closeSync?(): void };
type Instance = { connect(): Promise<Connection>; closeSync?(): void };
type DuckDbModule = { DuckDBInstance: { create(path: string, options: Record<string, string>): Promise<Instance> } };

async function loadDuckDb(modulePath: string | undefined): Promise<DuckDbModule> {
  try {
    if (modulePath !== undefined) return (await import(pathToFileURL(join(modulePath, 'lib', 'index.js')).href)) as never;
    return (await import('@duckdb/node-api')) as never;
  } catch {
    throw new InputError(modulePath !== undefined
      ? `the npm package @duckdb/node-api installed in ${modulePath}`
      : 'the npm package @duckdb/node-api installed next to gainline (npm install @duckdb/node-api)', '--engine duckdb');
  }
}

/** The relation DuckDB reads for a path, with the expressions giving file order. */
export async function duckSourceRelation(path: string, format: string | undefined): Promise<{ relation: string; order: string[]; kind: 'parquet' | 'csv' | 'tsv' }> {
  const info = await stat(path);
  const lower = path.toLowerCase();
  const kind = format ?? (info.isDirectory() || /\.parquet$/.test(lower) ? 'parquet' : /\.tsv(\.gz)?$/.test(lower) ? 'tsv' : /\.csv(\.gz)?$/.test(lower) ? 'csv' : undefined);
  if (kind === 'parquet') {
    // A folder: every .parquet part under it, in file name order, then row order within each part.
    const glob = info.isDirectory() ? join(path, '**', '*.parquet') : path;
    // file_index follows the sorted file names; one number per row keeps the repeated-row aggregate spillable.
    // Parts are matched by column name, a column a part lacks NULL there, as the local engine reads them (parquet.ts, partsColumns).
    return { relation: `read_parquet(${stringDuck(glob)}, file_row_number = true, union_by_name = true)`, order: ['(file_index * 1099511627776 + file_row_number)'], kind };
  }
  if (kind === 'csv' || kind === 'tsv') {
    // Every field as text so ids keep their spelling ("007" stays "007"); numbers are cast where used.
    // row_number() OVER () follows the scan order, which DuckDB keeps with preserve_insertion_order.
    const delim = kind === 'tsv' ? '\\t' : ',';
    return {
      relation: `(SELECT *, row_number() OVER () AS __gainline_row FROM read_csv(${stringDuck(path)}, all_varchar = true, header = true, delim = ${stringDuck(delim)}))`,
      order: ['__gainline_row'],
      kind,
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

/** One file served through DuckDB: the per-query table, and any one query's rows. Close it when done. */
export class DuckDbTable {
  private constructor(
    private readonly instance: Instance,
    private readonly connection: Connection,
    private readonly spill: string,
    readonly source: string,
    readonly sqlSource: SqlSource,
  ) {}

  static async open(path: string, source: string, options: DuckDbOpenOptions): Promise<DuckDbTable> {
    const { DuckDBInstance } = await loadDuckDb(options.modulePath);
    const { relation, order, kind } = await duckSourceRelation(path, options.format);
    const spill = await mkdtemp(join(tmpdir(), 'gainline-duckdb-'));
    // Parquet rows carry their own order (file_row_number), so DuckDB need not keep the scan order, which
    // lets it stream and spill freely; CSV's row number comes from the scan order, which must then be kept.
    const settings: Record<string, string> = { preserve_insertion_order: kind === 'parquet' ? 'false' : 'true', temp_directory: spill };
    if (options.memoryLimit !== undefined) settings.memory_limit = options.memoryLimit;
    if (options.threads !== undefined) settings.threads = String(options.threads);
    let instance: Instance;
    try {
      instance = await DuckDBInstance.create(':memory:', settings);
    } catch (e) {
      await rm(spill, { recursive: true, force: true });
      throw new InputError(`a DuckDB setting it accepts (${(e instanceof Error ? e.message : String(e)).split('\n')[0]})`, '--memory-limit', undefined, options.memoryLimit);
    }
    try {
      const connection = await instance.connect();
      const run = (sql: string) => connection.runAndReadAll(sql).catch((e: unknown) => asInputError(e, source));
      const described = await run(`DESCRIBE SELECT * FROM ${relation}`);
      const names = described.getColumnsJS()[0]!.map(String).filter((n) => !ORDER_COLUMNS.has(n));
      const roles = resolveRoles(names, options.columns, { file: source, line: 1, text: names.join(',') });
      if (roles.score < 0) throw new InputError('a score column (the SQL engines rank by score, not by a rank column)', source);
      const col = (i: number) => quoteDuck(names[i]!);
      const sqlSource: SqlSource = { relation, query: col(roles.query), item: col(roles.item), score: col(roles.score), label: col(roles.label), order };
      return new DuckDbTable(instance, connection, spill, source, sqlSource);
    } catch (e) {
      instance.closeSync?.();
      await rm(spill, { recursive: true, force: true });
      throw e;
    }
  }

  private async run(sql: string, values?: unknown[]): Promise<Reader> {
    try {
      return await this.connection.runAndReadAll(sql, values);
    } catch (e) {
      return asInputError(e, this.source);
    }
  }

  /**
   * The per-query table as an Evaluation, after the checks the local engine makes before scoring; with
   * `sensitivity`, one more per-query table per other gain or tie convention gives the sensitivity rows.
   */
  async evaluate(metrics: readonly MetricSpec[], conventions: Conventions, sensitivity = false): Promise<TableEvaluation & { gmax: number }> {
    checkExpressible(metrics, conventions);
    const { gmax, facts } = await this.checkGrades(metrics, conventions);
    const perQuery = async (m: readonly MetricSpec[], c: Conventions) =>
      (await this.run(perQuerySql({ dialect: 'duckdb', source: this.sqlSource, metrics: m, conventions: c, gmax }))).getColumnsJS();
    const table = tableFromColumns(await perQuery(metrics, conventions), metrics);
    const result = evaluationFromTable(table, metrics, conventions, gmax, this.source);
    if (!sensitivity) return { ...result, gmax };
    return { ...(await addSensitivity(result, facts, async (t) => {
      const columns = await perQuery([t.metric], t.conventions);
      return { queries: columns[0]!.map(String), values: columns[COUNT_COLUMNS.length]!.map((v) => (v === null ? NaN : Number(v))) };
    })), gmax };
  }

  /** One query's rows in file order; the query id is a bound parameter. */
  async queryRows(query: string): Promise<QueryRows> {
    const s = this.sqlSource;
    const sql = `SELECT CAST(${s.item} AS VARCHAR), CAST(${s.score} AS DOUBLE), CAST(${s.label} AS DOUBLE) FROM ${s.relation} ` +
      `WHERE CAST(${s.query} AS VARCHAR) = $1 ORDER BY ${s.order.join(', ')}`;
    const [items, scores, labels] = (await this.run(sql, [query])).getColumnsJS();
    const number = (v: unknown) => (v === null || v === undefined ? NaN : Number(v));
    return { query, items: items!.map(String), scores: scores!.map(number), labels: labels!.map(number) };
  }

  async close(): Promise<void> {
    this.connection.closeSync?.();
    this.instance.closeSync?.();
    await rm(this.spill, { recursive: true, force: true });
  }

  /** The checks evaluate.ts makes before scoring, from the grade range the database reports; returns ERR's g_max. */
  private async checkGrades(metrics: readonly MetricSpec[], c: Conventions): Promise<{ gmax: number; facts: TableFacts }> {
    const label = `CAST(${this.sqlSource.label} AS DOUBLE)`;
    const grade = `CASE WHEN ${label} IS NULL OR isnan(${label}) THEN 0.0 ELSE ${label} END`;
    const known = c.gain.kind === 'map' ? [...c.gain.gains.keys()] : [];
    const unknown = c.gain.kind === 'map' ? `min(g) FILTER (WHERE g NOT IN (${known.map((k) => String(k)).join(', ')}))` : 'NULL';
    const row = (await this.run(`SELECT min(g), max(g), ${unknown}, count(*) FROM (SELECT ${grade} AS g FROM ${this.sqlSource.relation})`)).getRowsJS()[0]!;
    const range = { lowest: row[0] === null ? 0 : Number(row[0]), highest: row[1] === null ? 0 : Number(row[1]) };
    const unmappedGrade = row[2] === null || row[2] === undefined ? undefined : Number(row[2]);
    const facts: TableFacts = { range, rows: Number(row[3]), ...(unmappedGrade !== undefined ? { unmappedGrade } : {}) };
    return { gmax: checkTable(facts, metrics, c, this.source), facts };
  }
}

/** Opens, evaluates and closes: the command line's one-shot use. */
export async function evaluateWithDuckDb(path: string, source: string, options: DuckDbOptions): Promise<TableEvaluation & { gmax: number }> {
  checkExpressible(options.metrics, options.conventions);
  const table = await DuckDbTable.open(path, source, options);
  try {
    return await table.evaluate(options.metrics, options.conventions, options.sensitivity ?? false);
  } finally {
    await table.close();
  }
}
