/** The terminal report of a comparison: summary per metric, notes, then the biggest drops and gains. */
import { describeConventions, formatValue } from './reportInput';
import {
  biggestChanges,
  coverageLine,
  formatDelta,
  metricFigures,
  type CompareReportInput,
  type CompareReportOptions,
  type QueryChange,
} from './compareShared';
import { alignedTable, clip } from './textTable';

const QUERY_WIDTH = 40;

export function formatCompareTable(input: CompareReportInput, options: CompareReportOptions): string {
  const c = input.comparison;
  const sections: string[] = [];
  sections.push(`A: ${input.sourceA}\nB: ${input.sourceB}\n${coverageLine(input)}`);
  sections.push(
    'Paired over common queries (Δ = B − A)\n' +
      alignedTable(
        ['metric', 'A', 'B', 'Δ', '95% interval', 'p t', 'p Wilcoxon', 'p random', 'Holm', 'BH', 'B better / same / worse', 'pairs'],
        c.byMetric.map((r) => [...metricFigures(r), String(r.paired)]),
        ['left', 'right', 'right', 'right', 'left', 'right', 'right', 'right', 'right', 'right', 'right', 'right'],
      ),
  );
  sections.push(`Conventions\n  ${describeConventions(c.conventions)}`);
  sections.push('How these were computed\n' + c.methodNotes.map((n) => `  - ${n}`).join('\n') +
    '\n  - Holm and BH columns adjust the randomization p-values.');
  if (c.warnings.length > 0) sections.push('Notes\n' + c.warnings.map((w) => `  - ${w}`).join('\n'));

  const headline = c.metrics[c.headline];
  if (options.top > 0 && headline) {
    const { drops, gains } = biggestChanges(input, options.top);
    sections.push(changeSection(`Largest drops in ${headline.key}`, drops));
    sections.push(changeSection(`Largest gains in ${headline.key}`, gains));
  }
  return sections.join('\n\n') + '\n';
}

function changeSection(title: string, changes: readonly QueryChange[]): string {
  if (changes.length === 0) return `${title}\n  none`;
  return (
    `${title}\n` +
    alignedTable(
      ['#', 'query', 'A', 'B', 'Δ'],
      changes.map((ch, i) => [String(i + 1), clip(ch.query, QUERY_WIDTH), formatValue(ch.a), formatValue(ch.b), formatDelta(ch.delta)]),
      ['right', 'left', 'right', 'right', 'right'],
    )
  );
}
