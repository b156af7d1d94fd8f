/**
 * The per-query table in ClickHouse SQL, for servers without window functions (Debian's 18.16): one
 * SELECT … GROUP BY query that gathers each query's rows into arrays and ranks them with arraySort and
 * higher-order array functions. One level on purpose: on a Distributed table read with
 * distributed_group_by_no_merge=1 every shard then computes its own queries to the end and only the
 * per-query rows travel.
 *
 * Cost: per query, a few sorts of its n rows (n log n). Nothing indexes an array from inside a lambda:
 * ClickHouse pays for that by copying the indexed array once per element (n² per query).
 */
import type { SqlRequest } from './request';
import { COUNT_COLUMNS, metricColumns } from './request';
import { gainExpression, literal, metricExpressions, type RowField, type TermDialect } from './terms';

/**
 * Settings of the per-query statement: each shard computes its own queries; and room for the statement,
 * whose aliases ClickHouse expands in place before it finds the repeated parts (computed once).
 */
export const CLICKHOUSE_SETTINGS: Readonly<Record<string, string>> = {
  distributed_group_by_no_merge: '1',
  max_expanded_ast_elements: '100000000',
  max_ast_elements: '1000000',
  max_query_size: '10000000',
};

/** `name` with embedded back quotes escaped. */
export function quoteClickHouse(name: string): string {
  return '`' + name.replace(/\\/g, '\\\\').replace(/`/g, '\\`') + '`';
}

/** 'text' as a ClickHouse string literal: backslashes and quotes escaped (ClickHouse reads C-style escapes). */
export function stringClickHouse(text: string): string {
  return "'" + text.replace(/\\/g, '\\\\').replace(/'/g, "\\'") + "'";
}

const FIELDS: readonly RowField[] = ['pos', 's', 'm', 'r', 'bef', 'gsum', 'usum', 'rel', 'igain', 'ipos', 'err_r', 'surv'];

const DIALECT: TermDialect = {
  field: (name) => name,
  // Every field is an array of the query's slots; the lambda walks the ones the term uses side by side
  // (no captured arrays). Passing only those keeps the statement small once ClickHouse expands aliases.
  sum: (term) => {
    const used = FIELDS.filter((f) => new RegExp(`\\b${f}\\b`).test(term));
    return `arraySum((${used.join(', ')}) -> ${term}, ${used.map((f) => `f_${f}`).join(', ')})`;
  },
  items: 'toFloat64(length(f_pos))',
  nan: 'nan',
};

export function clickhouseSql(request: SqlRequest): string {
  const { source: src, conventions: c, metrics } = request;
  const score = `ifNull(toFloat64(${src.score}), nan)`;
  const label = `ifNull(toFloat64(${src.label}), nan)`;
  const order = src.order.length > 0
    ? `tuple(${src.order.join(', ')})`
    : // No row order (NO_ORDER_RULE): item id, then score (missing lowest), then grade.
      `tuple(toString(${src.item}), if(isFinite(${score}), ${score}, -inf), if(isNaN(${label}), 0., ${label}))`;
  const hasErr = metrics.some((m) => m.name === 'err');
  const gmax = request.gmax ?? c.maxGrade;
  // The highest grade over the whole table; the outer max merges the one row per shard that a
  // Distributed table gives under distributed_group_by_no_merge=1.
  const gmaxSql = gmax !== undefined ? literal(gmax) : `(SELECT max(top) FROM (SELECT max(if(isNaN(${label}), 0., ${label})) AS top FROM ${src.relation}))`;
  // Within a tie: pessimistic puts lower grades first, optimistic higher; unscored items stay in row order.
  const tieKey = c.ties === 'pessimistic' ? 'if(ok, g, 0.)' : c.ties === 'optimistic' ? 'if(ok, -g, 0.)' : '0.';
  const line = (expr: string, alias: string) => `  ${expr} AS ${alias},`;

  const lines = [
    line(`toString(${src.query})`, 'q'),
    line('count()', 'raw_rows'),
    line(`groupArray(toString(${src.item}))`, 'a_item'),
    line(`groupArray(${score})`, 'a_score'),
    line(`groupArray(${label})`, 'a_label'),
    line(`groupArray(${order})`, 'a_ord'),
    '  -- Rows in row order; of repeated (query, item) rows the first is kept.',
    line('arraySort((v, o) -> o, a_item, a_ord)', 'o_item'),
    line('arrayEnumerateUniq(o_item)', 'o_nth'),
    line('arrayFilter((v, k) -> k = 1, arraySort((v, o) -> o, a_score, a_ord), o_nth)', 'k_score'),
    line('arrayFilter((v, k) -> k = 1, arraySort((v, o) -> o, a_label, a_ord), o_nth)', 'k_label'),
    '  -- A missing or non-finite score ranks after every scored item, in row order; a NaN label is unjudged (grade 0).',
    line('arrayMap(x -> isFinite(x), k_score)', 'k_ok'),
    line('arrayMap(x -> if(isNaN(x), 0., x), k_label)', 'k_grade'),
    line('arrayMap((ok, x, g, i) -> tuple(1 - ok, if(ok, -x, 0.), ' + tieKey + ', i), k_ok, k_score, k_grade, arrayEnumerate(k_score))', 'k_key'),
    line('arraySort((v, k) -> k, k_ok, k_key)', 'x_ok'),
    line('arraySort((v, k) -> k, k_score, k_key)', 'x_score'),
    line('arraySort((v, k) -> k, k_grade, k_key)', 'x_grade'),
    line('arraySort((v, k) -> k, arrayMap(x -> toUInt8(isNaN(x)), k_label), k_key)', 'x_unj'),
    line(`arrayMap(g -> ${gainExpression(c, 'g', () => 'nan')}, x_grade)`, 'x_gain'),
    line(`arrayMap(g -> toUInt8(g >= ${literal(c.relevantFrom)}), x_grade)`, 'x_rel'),
    line('arrayEnumerate(x_score)', 'f_pos'),
    '  -- Tie groups: equal finite scores; each unscored item alone.',
    line('arrayMap((i, ok, x, prev) -> toUInt8(i = 1 OR ok = 0 OR x != prev), f_pos, x_ok, x_score, arrayPushFront(arrayPopBack(x_score), nan))', 't_flag'),
    line('arrayCumSum(t_flag)', 't_gid'),
    line('arrayMap((a, b) -> a + b - 1, arrayEnumerateUniq(t_gid), arrayReverse(arrayEnumerateUniq(arrayReverse(t_gid))))', 't_size'),
    ...(c.ties === 'average' ? averageGroups() : singleGroups(hasErr)),
    line(`arrayMap(g -> ${hasErr ? `(pow(2., g) - 1.) / pow(2., ${gmaxSql})` : '0.'}, x_grade)`, 'f_err_r'),
    line('arrayReverseSort(x_gain)', 'f_igain'),
    line('f_pos', 'f_ipos'),
  ];
  const columns = [...COUNT_COLUMNS, ...metricColumns(metrics)].map(quoteClickHouse);
  const counts = [
    'q',
    'raw_rows',
    'length(f_pos)',
    'arraySum(x_rel)',
    'arraySum(x -> 1 - x, x_ok)',
    'arraySum(x_unj)',
    'arraySum((ok, t) -> if(ok = 1 AND t > 1, 1, 0), x_ok, t_size)',
  ];
  const values = [...counts, ...metricExpressions(DIALECT, metrics, c)];
  // Inner names out_i: ClickHouse substitutes aliases into lambdas, so a column named like a lambda
  // parameter (the metric `r`) would change the terms. The outer SELECT gives the real names.
  const outputs = values.map((v, i) => `  ${v} AS out_${i}`);
  return `SELECT ${columns.map((name, i) => `out_${i} AS ${name}`).join(', ')} FROM (
SELECT
${lines.join('\n')}
${outputs.join(',\n')}
FROM ${src.relation}
GROUP BY q
)`;
}

/**
 * Per-slot group figures under `average` ties, without indexing arrays from inside lambdas (which costs
 * ClickHouse n² per query). Counts come from arrayEnumerateUniq run forwards and backwards over
 * (group, flag) pairs: items of the group with the slot's flag value = forward + backward count − 1.
 * The group's summed gain is spread from one value per group to its slots by a sort that puts each
 * group's value just before its slots, then a running sum of the differences between groups.
 */
function averageGroups(): string[] {
  const fromEnd = (arrays: string) => `arrayReverse(arrayEnumerateUniq(${arrays.split(', ').map((a) => `arrayReverse(${a})`).join(', ')}))`;
  const sameFlag = (flag: string) => `arrayMap((a, b) -> a + b - 1, arrayEnumerateUniq(t_gid, ${flag}), ${fromEnd(`t_gid, ${flag}`)})`;
  return [
    '  arrayEnumerateUniq(t_gid) AS t_nth,',
    '  arrayMap((i, p) -> toFloat64(i - p), f_pos, t_nth) AS f_s,',
    '  arrayMap(t -> toFloat64(t), t_size) AS f_m,',
    `  arrayMap((x, same, m) -> toFloat64(if(x = 1, same, m - same)), x_rel, ${sameFlag('x_rel')}, t_size) AS f_r,`,
    `  arrayMap((x, same, m) -> toFloat64(if(x = 1, same, m - same)), x_unj, ${sameFlag('x_unj')}, t_size) AS f_usum,`,
    // Relevant items before the group = relevant up to the slot − relevant of the group up to the slot.
    '  arrayMap((c, x, a, p) -> toFloat64(c - if(x = 1, a, p - a)), arrayCumSum(x_rel), x_rel, arrayEnumerateUniq(t_gid, x_rel), t_nth) AS f_bef,',
    '  arrayFilter((p, f) -> f = 1, arrayPopBack(arrayPushFront(arrayCumSum(x_gain), 0.)), t_flag) AS g_gain_before,',
    '  arrayMap((b, e) -> e - b, g_gain_before, arrayPushBack(arrayPopFront(g_gain_before), arraySum(x_gain))) AS g_gain,',
    "  arrayConcat(arrayMap(g -> tuple(g, 0), arrayEnumerate(g_gain)), arrayMap(g -> tuple(g, 1), t_gid)) AS spread_key,",
    '  arrayFilter((v, slot) -> slot = 1,',
    '    arrayCumSum(arraySort((v, k) -> k, arrayConcat(arrayMap((t, prev) -> t - prev, g_gain, arrayPushFront(arrayPopBack(g_gain), 0.)), arrayMap(x -> 0., f_pos)), spread_key)),',
    '    arraySort((v, k) -> k, arrayConcat(arrayMap(x -> 0, g_gain), arrayMap(x -> 1, f_pos)), spread_key)) AS f_gsum,',
    '  arrayMap(x -> 1., f_pos) AS f_surv,',
    '  arrayMap(x -> toFloat64(x), x_rel) AS f_rel,',
  ];
}

/** Without `average` ties every slot is its own group. */
function singleGroups(hasErr: boolean): string[] {
  return [
    '  arrayMap(i -> toFloat64(i - 1), f_pos) AS f_s,',
    '  arrayMap(i -> 1., f_pos) AS f_m,',
    '  arrayMap(x -> toFloat64(x), x_rel) AS f_r,',
    '  arrayMap((c, x) -> toFloat64(c - x), arrayCumSum(x_rel), x_rel) AS f_bef,',
    '  arrayMap(x -> toFloat64(x), x_unj) AS f_usum,',
    '  x_gain AS f_gsum,',
    hasErr
      ? '  arrayMap(c -> exp(c), arrayPopBack(arrayPushFront(arrayCumSum(arrayMap(x -> log(1. - x), f_err_r)), 0.))) AS f_surv,'
      : '  arrayMap(x -> 1., f_pos) AS f_surv,',
    '  f_r AS f_rel,',
  ];
}
