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
import { InputError } from '../errors';
import type { Conventions } from '../metrics/conventions';
import type { MetricSpec } from '../metrics/registry';
import { resolveRoles, type ColumnRoles } from '../readers/roles';
import { checkTable, type TableFacts } from './checks';
import { CLICKHOUSE_SETTINGS, quoteClickHouse, stringClickHouse } from './clickhouse';
import { perQuerySql } from './index';
import { evaluationFromTable, type TableEvaluation } from './perQueryTable';
import type { QueryRows } from './queryRows';
import { checkExpressible, COUNT_COLUMNS, NO_ORDER_RULE, type SqlSource } from './request';
import { addSensitivity } from './sensitivity';
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

export interface ClickHouseOpenOptions {
  readonly columns?: ColumnRoles;
  /** Column giving the rows' order; without it NO_ORDER_RULE applies. */
  readonly orderColumn?: string;
  /** Defaults to process.env (GAINLINE_CLICKHOUSE_USER / GAINLINE_CLICKHOUSE_PASSWORD). */
  readonly env?: Readonly<Record<string, string | undefined>>;
  /** Given by the editor (a setting and its secret storage); wins over env. */
  readonly credentials?: { readonly user?: string; readonly password?: string };
}

export interface ClickHouseOptions extends ClickHouseOpenOptions {
  readonly metrics: readonly MetricSpec[];
  readonly conventions: Conventions;
  /** Also the convention sensitivity rows (one more per-query table per other gain or tie convention). */
  readonly sensitivity?: boolean;
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

/** One table on a ClickHouse server: the per-query table, and any one query's rows. */
export class ClickHouseTable {
  private constructor(
    private readonly http: ClickHouseHttp,
    readonly source: string,
    readonly sqlSource: SqlSource,
    private readonly ordered: boolean,
  ) {}

  static async open(source: string, options: ClickHouseOpenOptions): Promise<ClickHouseTable> {
    const target = parseClickHouseUrl(source);
    const env = options.env ?? process.env;
    const user = options.credentials?.user ?? env[CLICKHOUSE_USER_VARIABLE];
    const password = options.credentials?.password ?? env[CLICKHOUSE_PASSWORD_VARIABLE];
    const http = new ClickHouseHttp(target, source, user || undefined, password || undefined);
    const relation = `${quoteClickHouse(target.database)}.${quoteClickHouse(target.table)}`;
    const described = await http.query(`DESCRIBE TABLE ${relation}`);
    const names = described.data.map((row) => String(row[0]));
    const usable = options.orderColumn === undefined ? names : names.filter((n) => n !== options.orderColumn);
    if (options.orderColumn !== undefined && usable.length === names.length) {
      throw new InputError(`a column named '${options.orderColumn}' (columns are: ${names.join(', ')})`, '--order-column');
    }
    const roles = resolveRoles(usable, { ...options.columns }, { file: source, line: 1, text: names.join(',') });
    if (roles.score < 0) throw new InputError('a score column (the SQL engines rank by score, not by a rank column)', source);
    const col = (i: number) => quoteClickHouse(usable[i]!);
    const sqlSource: SqlSource = {
      relation, query: col(roles.query), item: col(roles.item), score: col(roles.score), label: col(roles.label),
      order: options.orderColumn === undefined ? [] : [quoteClickHouse(options.orderColumn)],
    };
    return new ClickHouseTable(http, source, sqlSource, options.orderColumn !== undefined);
  }

  /** As DuckDbTable.evaluate: the per-query table, and with `sensitivity` one more table per other convention. */
  async evaluate(metrics: readonly MetricSpec[], conventions: Conventions, sensitivity = false): Promise<TableEvaluation & { gmax: number }> {
    checkExpressible(metrics, conventions);
    const { gmax, facts } = await checkGrades(this.http, this.sqlSource, metrics, conventions, this.source);
    const perQuery = async (m: readonly MetricSpec[], c: Conventions) => {
      const result = await this.http.query(perQuerySql({ dialect: 'clickhouse', source: this.sqlSource, metrics: m, conventions: c, gmax }), CLICKHOUSE_SETTINGS);
      // Shards answer in any order: sorted by query id so the report is the same every time.
      const rows = [...result.data].sort((a, b) => (String(a[0]) < String(b[0]) ? -1 : String(a[0]) > String(b[0]) ? 1 : 0));
      return result.meta.map((_, i) => rows.map((r) => r[i]));
    };
    const plain = evaluationFromTable(tableFromColumns(await perQuery(metrics, conventions), metrics), metrics, conventions, gmax, this.source);
    const withRows = !sensitivity ? plain : await addSensitivity(plain, facts, async (t) => {
      const columns = await perQuery([t.metric], t.conventions);
      return { queries: columns[0]!.map(String), values: columns[COUNT_COLUMNS.length]!.map((v) => (v === null ? NaN : Number(v))) };
    });
    const evaluated = { ...withRows, gmax };
    if (this.ordered) return evaluated;
    const warnings = [...evaluated.evaluation.warnings, `No row order was given (--order-column): ${NO_ORDER_RULE}.`];
    return { ...evaluated, evaluation: { ...evaluated.evaluation, warnings } };
  }

  /**
   * One query's rows in row order (the order column, else NO_ORDER_RULE's order, as the per-query SQL
   * takes them). The query id is a string literal escaped for ClickHouse: servers as old as 18.16 take
   * no bound query parameters.
   */
  async queryRows(query: string): Promise<QueryRows> {
    const s = this.sqlSource;
    const score = `ifNull(toFloat64(${s.score}), nan)`;
    const label = `ifNull(toFloat64(${s.label}), nan)`;
    const order = s.order.length > 0 ? s.order.join(', ')
      : `toString(${s.item}), if(isFinite(${score}), ${score}, -inf), if(isNaN(${label}), 0., ${label})`;
    const result = await this.http.query(
      `SELECT toString(${s.item}), ${score}, ${label} FROM ${s.relation} WHERE toString(${s.query}) = ${stringClickHouse(query)} ORDER BY ${order}`);
    const number = (v: unknown) => (v === null || v === undefined ? NaN : Number(v));
    return { query, items: result.data.map((r) => String(r[0])), scores: result.data.map((r) => number(r[1])), labels: result.data.map((r) => number(r[2])) };
  }

  async close(): Promise<void> {}
}

export async function evaluateWithClickHouse(source: string, options: ClickHouseOptions): Promise<TableEvaluation> {
  checkExpressible(options.metrics, options.conventions);
  const table = await ClickHouseTable.open(source, options);
  return table.evaluate(options.metrics, options.conventions, options.sensitivity ?? false);
}

/** The checks evaluate.ts makes before scoring, from the grade range the server reports; returns ERR's g_max. */
async function checkGrades(http: ClickHouseHttp, src: SqlSource, metrics: readonly MetricSpec[], c: Conventions, source: string): Promise<{ gmax: number; facts: TableFacts }> {
  const label = `ifNull(toFloat64(${src.label}), nan)`;
  const known = c.gain.kind === 'map' ? [...c.gain.gains.keys()].map((k) => `${k}`) : [];
  const outside = c.gain.kind === 'map' ? `NOT has([${known.map((k) => `toFloat64(${k})`).join(', ')}], g)` : '0';
  const result = await http.query(`SELECT min(g), max(g), count(), countIf(${outside}), minIf(g, ${outside}) FROM (SELECT if(isNaN(${label}), 0., ${label}) AS g FROM ${src.relation})`);
  const row = result.data[0]!;
  const count = Number(row[2]);
  const range = { lowest: count === 0 ? 0 : Number(row[0]), highest: count === 0 ? 0 : Number(row[1]) };
  const unmapped = Number(row[3]) > 0 ? { unmappedGrade: Number(row[4]) } : {};
  const facts: TableFacts = { range, rows: count, ...unmapped };
  return { gmax: checkTable(facts, metrics, c, source), facts };
}
