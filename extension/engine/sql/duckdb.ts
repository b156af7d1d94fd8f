/**
 * The per-query table in DuckDB SQL, with window functions: repeated rows dropped by an aggregate
 * (first row in file order), rows ranked per query, tie groups found by window partitions, then one
 * GROUP BY query summing the shared per-row terms (terms.ts).
 */
import type { SqlRequest } from './request';
import { COUNT_COLUMNS, metricColumns } from './request';
import { gainExpression, literal, metricExpressions, type TermDialect } from './terms';

/** "name" with embedded quotes doubled. */
export function quoteDuck(name: string): string {
  return `"${name.replace(/"/g, '""')}"`;
}

/** 'text' with embedded quotes doubled. */
export function stringDuck(text: string): string {
  return `'${text.replace(/'/g, "''")}'`;
}

const DIALECT: TermDialect = {
  field: (name) => name,
  sum: (term) => `sum(${term})`,
  items: 'CAST(count(*) AS DOUBLE)',
  nan: "'NaN'::DOUBLE",
};

export function duckdbSql(request: SqlRequest): string {
  const { source: src, conventions: c, metrics } = request;
  // One comparable value per row (a number lets the repeated-row aggregate spill to disk).
  const order = src.order.length === 1
    ? src.order[0]!
    : src.order.length > 1
      ? `{${src.order.map((e, i) => `'o${i}': ${e}`).join(', ')}}`
      : // No row order (NO_ORDER_RULE): item id, then score (missing lowest), then grade.
        `{'item': CAST(${src.item} AS VARCHAR), 'score': coalesce(CASE WHEN isfinite(CAST(${src.score} AS DOUBLE)) THEN CAST(${src.score} AS DOUBLE) END, '-Infinity'::DOUBLE), 'grade': coalesce(CAST(${src.label} AS DOUBLE), 0.0)}`;
  const hasErr = metrics.some((m) => m.name === 'err');
  const gmax = request.gmax ?? c.maxGrade;
  const gmaxSql = gmax !== undefined ? literal(gmax) : '(SELECT max(grade) FROM clean)';
  const unknownGrade = (g: string) => `error('expected a gain for grade ' || ${g} || ' in the gain map (unjudged rows count as grade 0)')`;
  // Tie groups: equal finite scores; every unscored item alone (its row order sets it apart).
  const groups = 'PARTITION BY q ORDER BY miss, score_key DESC NULLS LAST, CASE WHEN miss = 1 THEN ord END';
  const peers = `(${groups} RANGE BETWEEN CURRENT ROW AND CURRENT ROW)`;
  const through = `(${groups} RANGE BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW)`;
  // Within a tie: pessimistic puts lower grades first, optimistic higher; then row order (stable).
  const tieBreak = c.ties === 'pessimistic' ? 'CASE WHEN miss = 0 THEN grade END ASC, ' : c.ties === 'optimistic' ? 'CASE WHEN miss = 0 THEN grade END DESC, ' : '';
  const ranking = `PARTITION BY q ORDER BY miss, score_key DESC NULLS LAST, ${tieBreak}ord`;

  // Under average ties one sort serves positions and group figures: any order of a group's rows over its
  // slots gives the same sums (the terms are symmetric within a group).
  const rowFields = c.ties === 'average'
    ? `row_number() OVER (${groups}) AS pos, count(*) OVER ${peers} AS m, sum(rel) OVER ${peers} AS r,
         sum(gain) OVER ${peers} AS gsum, sum(unj) OVER ${peers} AS usum,
         count(*) OVER ${through} - count(*) OVER ${peers} AS s,
         sum(rel) OVER ${through} - sum(rel) OVER ${peers} AS bef, 1.0 AS surv, count(*) OVER ${peers} AS tsize`
    : `row_number() OVER (${ranking}) AS pos, 1 AS m, rel AS r, gain AS gsum, unj AS usum,
         row_number() OVER (${ranking}) - 1 AS s,
         sum(rel) OVER (${ranking} ROWS UNBOUNDED PRECEDING) - rel AS bef,
         ${hasErr ? `exp(coalesce(sum(ln(1.0 - err_r)) OVER (${ranking} ROWS BETWEEN UNBOUNDED PRECEDING AND 1 PRECEDING), 0.0))` : '1.0'} AS surv,
         count(*) OVER ${peers} AS tsize`;

  const columns = [...COUNT_COLUMNS, ...metricColumns(metrics)].map(quoteDuck);
  const counts = [
    'q',
    'sum(copies)',
    'count(*)',
    'sum(rel)',
    'sum(miss)',
    'sum(unj)',
    'sum(CASE WHEN miss = 0 AND tsize > 1 THEN 1 ELSE 0 END)',
  ];
  const values = [...counts, ...metricExpressions(DIALECT, metrics, c)];
  return `WITH
src AS (
  SELECT CAST(${src.query} AS VARCHAR) AS q, CAST(${src.item} AS VARCHAR) AS item,
         coalesce(CAST(${src.score} AS DOUBLE), 'NaN'::DOUBLE) AS score,
         coalesce(CAST(${src.label} AS DOUBLE), 'NaN'::DOUBLE) AS label, ${order} AS ord
  FROM ${src.relation}
),
-- Repeated (query, item) rows: the first in row order is ranked, the rest counted.
first_rows AS (
  SELECT q, item, arg_min(score, ord) AS score, arg_min(label, ord) AS label, min(ord) AS ord, count(*) AS copies
  FROM src GROUP BY q, item
),
-- A missing or non-finite score ranks after every scored item, in row order, each alone;
-- a missing or NaN label is unjudged and counts as grade 0.
clean AS (
  SELECT q, item, ord, copies,
         CASE WHEN isfinite(score) THEN score END AS score_key,
         CASE WHEN isfinite(score) THEN 0 ELSE 1 END AS miss,
         CASE WHEN isnan(label) THEN 1 ELSE 0 END AS unj,
         CASE WHEN isnan(label) THEN 0.0 ELSE label END AS grade
  FROM first_rows
),
graded AS (
  SELECT *, ${gainExpression(c, 'grade', unknownGrade)} AS gain,
         CASE WHEN grade >= ${literal(c.relevantFrom)} THEN 1 ELSE 0 END AS rel,
         ${hasErr ? `(pow(2.0, grade) - 1.0) / pow(2.0, ${gmaxSql})` : '0.0'} AS err_r
  FROM clean
),
positioned AS (
  SELECT q, ord, copies, miss, unj, rel, err_r, gain AS igain,
         row_number() OVER (PARTITION BY q ORDER BY gain DESC) AS ipos,
         ${rowFields}
  FROM graded
)
SELECT ${values.map((v, i) => `${v} AS ${columns[i]}`).join(',\n       ')}
FROM positioned
GROUP BY q
ORDER BY min(ord)`;
}
