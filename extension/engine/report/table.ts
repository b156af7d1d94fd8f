/** The default terminal report: means, conventions, notes, convention sensitivity, worst queries. */
import { describeConventions, formatValue, queryColumns, worstQueries, type ReportInput, type WorstOrder } from './reportInput';
import { alignedTable, clip } from './textTable';
import { formatCountInText } from '../../presentation/numbers';

export interface TableOptions {
  /** How many of the worst queries to list (0 hides the section). */
  readonly worst: number;
  /** The worst-first order to list instead of the headline's, with what it is sorted by. */
  readonly worstOrder?: WorstOrder;
}

const QUERY_WIDTH = 40;

export function formatTable(input: ReportInput, options: TableOptions): string {
  const ev = input.evaluation;
  const headline = ev.summary[ev.headline];
  const sections: string[] = [];
  const counted = headline ? ` · ${formatCountInText(headline.counted)} in the ${headline.key} mean` : '';
  sections.push(
    `${input.source}\n${formatCountInText(input.rowCount)} rows · ${formatCountInText(ev.queryCount)} queries${counted}`,
  );

  sections.push(
    'Means over queries\n' +
      alignedTable(
        ['metric', 'mean', 'queries'],
        ev.summary.map((s) => [s.key, formatValue(s.mean), String(s.counted)]),
        ['left', 'right', 'right'],
      ),
  );

  sections.push(`Conventions\n  ${describeConventions(ev.conventions)}${ev.weighting ? `\n  weighted means: ${ev.weighting.source}` : ''}`);

  if (ev.warnings.length > 0) sections.push('Notes\n' + ev.warnings.map((w) => `  - ${w}`).join('\n'));

  if (headline && ev.sensitivity.length > 0) {
    const rows: string[][] = [];
    const why: string[] = [];
    for (const row of ev.sensitivity) {
      if (row.unavailable !== undefined) {
        rows.push([row.label, 'n/a', '', String(row.counted)]);
        why.push(`  n/a ${row.label}: ${row.unavailable}`);
      } else rows.push([row.label, formatValue(row.mean), signed(row.mean - headline.mean), String(row.counted)]);
    }
    sections.push(
      `${headline.key} under other conventions\n` +
        alignedTable(['convention', 'mean', 'change', 'queries'], rows, ['left', 'right', 'right', 'right']) +
        why.map((w) => `\n${w}`).join(''),
    );
  }

  if (options.worst > 0 && headline) {
    const ids = options.worstOrder ? options.worstOrder.ids.slice(0, options.worst) : worstQueries(ev, options.worst);
    const columns = [...queryColumns(ev), ...(options.worstOrder?.column ? [options.worstOrder.column] : [])];
    const text = input.facts?.text;
    const rows = ids.map((q, i) => [
      String(i + 1),
      clip(input.queryNames.get(q), QUERY_WIDTH),
      ...(text ? [clip(text[q]!, QUERY_WIDTH)] : []),
      String(ev.perQuery.items[q]),
      String(ev.perQuery.relevant[q]),
      ...columns.map((c) => formatValue(c.valueOf(q), c.whole)),
    ]);
    const title = `Worst ${ids.length} ${ids.length === 1 ? 'query' : 'queries'} by ${options.worstOrder?.label ?? headline.key}`;
    sections.push(
      ids.length === 0
        ? `${title}\n  (no query has a ${headline.key} value)`
        : title +
            '\n' +
            alignedTable(
              ['#', 'query', ...(text ? ['text'] : []), 'items', 'relevant', ...columns.map((c) => c.key)],
              rows,
              ['right', 'left', ...(text ? ['left' as const] : []), 'right', 'right', ...columns.map(() => 'right' as const)],
            ),
    );
  }
  return sections.join('\n\n') + '\n';
}

function signed(x: number): string {
  if (Number.isNaN(x)) return '—';
  if (Math.abs(x) < 5e-5) return '0.0000'; // rounding noise must not print as "-0.0000"
  const text = formatValue(Math.abs(x));
  return x > 0 ? `+${text}` : x < 0 ? `-${text}` : ` ${text}`;
}
