/** A Markdown summary for pull requests and experiment notes: means, conventions, worst queries. */
import { describeConventions, formatValue, queryColumns, worstQueries, type ReportInput, type WorstOrder } from './reportInput';
import { markdownTable } from './textTable';

export function formatMarkdown(input: ReportInput, options: { readonly worst: number; readonly worstOrder?: WorstOrder }): string {
  const ev = input.evaluation;
  const headline = ev.summary[ev.headline];
  const parts: string[] = [];
  parts.push(`### Evaluation of \`${input.source.replaceAll('`', "'")}\``);
  parts.push(`${input.rowCount} rows, ${ev.queryCount} queries.  \nConventions: ${describeConventions(ev.conventions)}.${ev.weighting ? `  \nWeighted means: ${ev.weighting.source}.` : ''}`);
  parts.push(
    markdownTable(
      ['metric', 'mean', 'queries'],
      ev.summary.map((s) => [s.key, formatValue(s.mean), String(s.counted)]),
      ['left', 'right', 'right'],
    ),
  );
  if (ev.warnings.length > 0) parts.push(ev.warnings.map((w) => `- ${w}`).join('\n'));
  if (options.worst > 0 && headline) {
    const ids = options.worstOrder ? options.worstOrder.ids.slice(0, options.worst) : worstQueries(ev, options.worst);
    const columns = [...queryColumns(ev), ...(options.worstOrder?.column ? [options.worstOrder.column] : [])];
    parts.push(`#### Worst ${ids.length} ${ids.length === 1 ? 'query' : 'queries'} by ${options.worstOrder?.label ?? headline.key}`);
    if (ids.length > 0) {
      parts.push(
        markdownTable(
          ['#', 'query', 'items', 'relevant', ...columns.map((c) => c.key)],
          ids.map((q, i) => [
            String(i + 1),
            input.queryNames.get(q),
            String(ev.perQuery.items[q]),
            String(ev.perQuery.relevant[q]),
            ...columns.map((c) => formatValue(c.valueOf(q), c.whole)),
          ]),
          ['right', 'left', 'right', 'right', ...columns.map(() => 'right' as const)],
        ),
      );
    }
  }
  return parts.join('\n\n') + '\n';
}
