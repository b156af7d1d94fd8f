/** A Markdown summary for pull requests and experiment notes: means, conventions, worst queries. */
import { describeConventions, formatValue, queryColumns, worstQueries, type ReportInput } from './reportInput';
import { markdownTable } from './textTable';

export function formatMarkdown(input: ReportInput, options: { readonly worst: number }): string {
  const ev = input.evaluation;
  const headline = ev.summary[ev.headline];
  const parts: string[] = [];
  parts.push(`### Evaluation of \`${input.source.replaceAll('`', "'")}\``);
  parts.push(`${input.rowCount} rows, ${ev.queryCount} queries.  \nConventions: ${describeConventions(ev.conventions)}.`);
  parts.push(
    markdownTable(
      ['metric', 'mean', 'queries'],
      ev.summary.map((s) => [s.key, formatValue(s.mean), String(s.counted)]),
      ['left', 'right', 'right'],
    ),
  );
  if (ev.warnings.length > 0) parts.push(ev.warnings.map((w) => `- ${w}`).join('\n'));
  if (options.worst > 0 && headline) {
    const ids = worstQueries(ev, options.worst);
    const columns = queryColumns(ev);
    parts.push(`#### Worst ${ids.length} ${ids.length === 1 ? 'query' : 'queries'} by ${headline.key}`);
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
