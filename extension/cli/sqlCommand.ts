/**
 * `gainline sql --dialect duckdb|clickhouse`: prints the SQL that computes the per-query table, for a
 * team to run in its own scheduler. Nothing is read or connected to.
 */
import { parseArgs } from 'node:util';
import { InputError } from '../engine/errors';
import { describeConventions } from '../engine/report/reportInput';
import { CLICKHOUSE_SETTINGS, sqlDefaultMetrics, NO_ORDER_RULE, perQuerySql, quoteClickHouse, quoteDuck, SQL_DIALECTS, COUNT_COLUMNS, metricColumns, type SqlDialect } from '../engine/sql/index';
import { conventionOptions, scoringSetupFrom } from './conventionArgs';
import { UsageError } from './evalCommand';
import type { CliIO } from './io';

export const sqlUsage = `Usage: gainline sql --dialect duckdb|clickhouse [options]

Prints one SQL query that computes the per-query table (one row per query: counts, then one column
per metric) under the conventions given, exactly as gainline eval computes it. Every metric but tau
is expressed; ERR only without average ties (refused otherwise).

SQL:
  --dialect D           duckdb (window functions) | clickhouse (arrays; servers without window functions)
  --from RELATION       the table or subquery to read (default: dump)
  --order-column NAME   the column giving the rows' order; without it, ${NO_ORDER_RULE}
  --columns ROLES       column names, e.g. query=sid,item=pid,label=grade,score=p
                        (default query_id, item_id, label, score)
Metrics and conventions: as for gainline eval (--metrics, --gain, --ties, --no-relevant,
  --relevant-from, --max-grade, --rbp-persistence). Without --metrics: eval's default list less tau
  (and less ERR under average ties). Without --max-grade, ERR's maximum grade is the
  highest grade in the table (a subquery).
The query does not check the grades: exponential gain needs grades >= 0, ERR grades <= its maximum,
and a gain map a gain for every grade (DuckDB stops with an error; ClickHouse gives NaN).
`;

const sqlOptions = {
  metrics: conventionOptions.metrics,
  gain: conventionOptions.gain,
  ties: conventionOptions.ties,
  'no-relevant': conventionOptions['no-relevant'],
  'relevant-from': conventionOptions['relevant-from'],
  'max-grade': conventionOptions['max-grade'],
  'rbp-persistence': conventionOptions['rbp-persistence'],
  columns: conventionOptions.columns,
  dialect: { type: 'string' },
  from: { type: 'string' },
  'order-column': { type: 'string' },
  help: { type: 'boolean', short: 'h' },
} as const;

export async function runSql(argv: string[], io: CliIO): Promise<number> {
  const { values, positionals } = parseArgs({ args: argv, options: sqlOptions, allowPositionals: true, strict: true });
  if (values.help) {
    io.out(sqlUsage);
    return 0;
  }
  if (positionals.length > 0) throw new UsageError(`sql reads no files (name the table with --from); got ${positionals.join(' ')}`);
  if (values.dialect === undefined) throw new UsageError('sql needs --dialect duckdb or --dialect clickhouse');
  if (!(SQL_DIALECTS as readonly string[]).includes(values.dialect)) {
    throw new InputError(`one of ${SQL_DIALECTS.join(', ')}`, '--dialect', undefined, values.dialect);
  }
  const dialect = values.dialect as SqlDialect;
  const given = scoringSetupFrom(values);
  const setup = values.metrics === undefined ? { ...given, metrics: sqlDefaultMetrics(given.metrics, given.conventions) } : given;
  const roles = setup.read.columns ?? {};
  if (roles.rank !== undefined) throw new InputError('query, item, label and score roles (the SQL ranks by score)', '--columns', undefined, values.columns);
  const quote = dialect === 'duckdb' ? quoteDuck : quoteClickHouse;
  const sql = perQuerySql({
    dialect,
    source: {
      relation: values.from ?? 'dump',
      query: quote(roles.query ?? 'query_id'),
      item: quote(roles.item ?? 'item_id'),
      score: quote(roles.score ?? 'score'),
      label: quote(roles.label ?? 'label'),
      order: values['order-column'] === undefined ? [] : [quote(values['order-column'])],
    },
    metrics: setup.metrics,
    conventions: setup.conventions,
  });
  const header = [
    `-- gainline per-query table (${dialect}): ${describeConventions(setup.conventions)}`,
    `-- columns: ${[...COUNT_COLUMNS, ...metricColumns(setup.metrics)].join(', ')}`,
    values['order-column'] === undefined ? `-- row order: none given; ${NO_ORDER_RULE}` : `-- row order: ${values['order-column']}`,
    ...(dialect === 'clickhouse'
      ? [`-- run with the settings ${Object.entries(CLICKHOUSE_SETTINGS).map(([k, v]) => `${k}=${v}`).join(', ')}`,
        '-- (on a Distributed table sharded by query id each shard then computes its own queries; check no query id comes back twice)']
      : []),
  ];
  io.out(`${header.join('\n')}\n${sql};\n`);
  return 0;
}
