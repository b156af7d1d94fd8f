/**
 * A dump argument clickhouse://HOST:PORT/DATABASE.TABLE: the per-query table computed on a ClickHouse
 * server through its HTTP interface, read back as JSON. On a Distributed table the query runs with
 * distributed_group_by_no_merge=1, so each shard computes its own queries to the end; a query id that
 * comes back twice (its rows split across shards) fails the whole evaluation (perQueryTable.ts).
 *
 * Credentials come from GAINLINE_CLICKHOUSE_USER / GAINLINE_CLICKHOUSE_PASSWORD and go only into the
 * Authorization header; every message shown is scrubbed of the password.
 */
import { request } from 'node:http';
import { InputError } from '../engine/errors';
import type { Conventions } from '../engine/metrics/conventions';
import type { MetricSpec } from '../engine/metrics/registry';
import { checkTable } from '../engine/sql/checks';
import { resolveRoles, type ColumnRoles } from '../engine/readers/roles';
import { checkExpressible, CLICKHOUSE_SETTINGS, NO_ORDER_RULE, perQuerySql, quoteClickHouse, type SqlSource } from '../engine/sql/index';
import { evaluationFromTable, type TableEvaluation } from '../engine/sql/perQueryTable';
import { tableFromColumns } from './tableColumns';

export const CLICKHOUSE_USER_VARIABLE = 'GAINLINE_CLICKHOUSE_USER';
export const CLICKHOUSE_PASSWORD_VARIABLE = 'GAINLINE_CLICKHOUSE_PASSWORD';

export function isClickHouseUrl(text: string): boolean {
  return /^clickhouse:\/\//i.test(text);
}

export interface ClickHouseTarget {
  readonly host: string;
  readonly port: number;
  readonly database: string;
  readonly table: string;
}

const EXPECTED_URL = 'a dump of the form clickhouse://HOST:PORT/DATABASE.TABLE';

/** Parses the dump argument; credentials in it are refused (they belong in the environment). */
export function parseClickHouseUrl(text: string): ClickHouseTarget {
  const m = /^clickhouse:\/\/([^/@:]+|\[[0-9a-fA-F:]+\]):(\d{1,5})\/([A-Za-z_][\w]*)\.([A-Za-z_][\w]*)\/?$/i.exec(text);
  if (!m) {
    if (/^clickhouse:\/\/[^/]*@/i.test(text)) {
      throw new InputError(`${EXPECTED_URL} without a user or password (set ${CLICKHOUSE_USER_VARIABLE} and ${CLICKHOUSE_PASSWORD_VARIABLE})`, 'clickhouse://');
    }
    throw new InputError(EXPECTED_URL, undefined, undefined, text);
  }
  return { host: m[1]!, port: Number(m[2]), database: m[3]!, table: m[4]! };
}

export interface ClickHouseOptions {
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  readonly columns?: ColumnRoles;
  /** Column giving the rows' order; without it NO_ORDER_RULE applies. */
  readonly orderColumn?: string;
  /** Defaults to process.env. */
  readonly env?: Readonly<Record<string, string | undefined>>;
}

/**
 * POST with node:http rather than fetch: a server computing over billions of rows may answer only after
 * many minutes, past fetch's fixed wait for the response headers.
 */
function post(url: string, body: string, headers: Record<string, string>): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const req = request(url, { method: 'POST', headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString('utf8') }));
      res.on('error', reject);
    });
    req.on('error', reject);
    req.end(body);
  });
}

/** Sends one statement over HTTP; the response body as JSON (JSONCompact). */
class ClickHouseHttp {
  constructor(
    private readonly target: ClickHouseTarget,
    private readonly source: string,
    private readonly user: string | undefined,
    private readonly password: string | undefined,
  ) {}

  async query(sql: string, settings: Record<string, string> = {}): Promise<{ data: unknown[][]; meta: { name: string }[] }> {
    const { host, port, database } = this.target;
    const params = new URLSearchParams({ database, output_format_json_quote_64bit_integers: '0', ...settings });
    const headers: Record<string, string> = { 'Content-Type': 'text/plain; charset=utf-8' };
    if (this.user !== undefined || this.password !== undefined) {
      headers.Authorization = 'Basic ' + Buffer.from(`${this.user ?? 'default'}:${this.password ?? ''}`).toString('base64');
    }
    let status: number;
    let body: string;
    try {
      ({ status, body } = await post(`http://${host}:${port}/?${params}`, `${sql}\nFORMAT JSONCompact`, headers));
    } catch (e) {
      const cause = (e as { code?: string }).code ?? (e instanceof Error ? e.message : String(e));
      throw new InputError(`a ClickHouse server answering over HTTP at ${host}:${port} (${this.scrub(String(cause))})`, this.source);
    }
    if (status !== 200) {
      const first = body.split('\n')[0]!.replace(/, e\.what\(\) = .*$/, '').trim();
      throw new InputError(`a table ClickHouse can compute on (server said: ${this.scrub(first)})`, this.source);
    }
    return JSON.parse(body) as { data: unknown[][]; meta: { name: string }[] };
  }

  /** Nothing shown to the user may carry the password. */
  scrub(text: string): string {
    return this.password ? text.split(this.password).join('***') : text;
  }
}

export async function evaluateWithClickHouse(source: string, options: ClickHouseOptions): Promise<TableEvaluation> {
  checkExpressible(options.metrics, options.conventions);
  const target = parseClickHouseUrl(source);
  const env = options.env ?? process.env;
  const http = new ClickHouseHttp(target, source, env[CLICKHOUSE_USER_VARIABLE], env[CLICKHOUSE_PASSWORD_VARIABLE]);
  const relation = `${quoteClickHouse(target.database)}.${quoteClickHouse(target.table)}`;
  const described = await http.query(`DESCRIBE TABLE ${relation}`);
  const names = described.data.map((row) => String(row[0]));
  const explicit = { ...options.columns };
  const usable = options.orderColumn === undefined ? names : names.filter((n) => n !== options.orderColumn);
  if (options.orderColumn !== undefined && usable.length === names.length) {
    throw new InputError(`a column named '${options.orderColumn}' (columns are: ${names.join(', ')})`, '--order-column');
  }
  const roles = resolveRoles(usable, explicit, { file: source, line: 1, text: names.join(',') });
  if (roles.score < 0) throw new InputError('a score column (the SQL engines rank by score, not by a rank column)', source);
  const col = (i: number) => quoteClickHouse(usable[i]!);
  const sqlSource: SqlSource = {
    relation, query: col(roles.query), item: col(roles.item), score: col(roles.score), label: col(roles.label),
    order: options.orderColumn === undefined ? [] : [quoteClickHouse(options.orderColumn)],
  };
  const gmax = await checkGrades(http, sqlSource, options, source);
  const sql = perQuerySql({ dialect: 'clickhouse', source: sqlSource, metrics: options.metrics, conventions: options.conventions, gmax });
  const result = await http.query(sql, CLICKHOUSE_SETTINGS);
  // Shards answer in any order: sorted by query id so the report is the same every time.
  const rows = [...result.data].sort((a, b) => (String(a[0]) < String(b[0]) ? -1 : String(a[0]) > String(b[0]) ? 1 : 0));
  const columns = result.meta.map((_, i) => rows.map((r) => r[i]));
  const table = tableFromColumns(columns, options.metrics);
  const evaluated = evaluationFromTable(table, options.metrics, options.conventions, gmax, source);
  if (options.orderColumn !== undefined) return evaluated;
  const warnings = [...evaluated.evaluation.warnings, `No row order was given (--order-column): ${NO_ORDER_RULE}.`];
  return { ...evaluated, evaluation: { ...evaluated.evaluation, warnings } };
}

/** The checks evaluate.ts makes before scoring, from the grade range the server reports; returns ERR's g_max. */
async function checkGrades(http: ClickHouseHttp, src: SqlSource, options: ClickHouseOptions, source: string): Promise<number> {
  const c = options.conventions;
  const label = `ifNull(toFloat64(${src.label}), nan)`;
  const known = c.gain.kind === 'map' ? [...c.gain.gains.keys()].map((k) => `${k}`) : [];
  const outside = c.gain.kind === 'map' ? `NOT has([${known.map((k) => `toFloat64(${k})`).join(', ')}], g)` : '0';
  const result = await http.query(`SELECT min(g), max(g), count(), countIf(${outside}), minIf(g, ${outside}) FROM (SELECT if(isNaN(${label}), 0., ${label}) AS g FROM ${src.relation})`);
  const row = result.data[0]!;
  const count = Number(row[2]);
  const range = { lowest: count === 0 ? 0 : Number(row[0]), highest: count === 0 ? 0 : Number(row[1]) };
  const unmapped = Number(row[3]) > 0 ? { unmappedGrade: Number(row[4]) } : {};
  return checkTable({ range, rows: count, ...unmapped }, options.metrics, c, source);
}
