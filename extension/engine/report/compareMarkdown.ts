/** A comparison in Markdown, ready to paste into a pull request description. */
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
import { markdownTable } from './textTable';

export function formatCompareMarkdown(input: CompareReportInput, options: CompareReportOptions): string {
  const c = input.comparison;
  const code = (text: string) => '`' + text.replaceAll('`', "'") + '`';
  const parts: string[] = [];
  parts.push(`### ${code(input.sourceB)} (B) against ${code(input.sourceA)} (A)`);
  parts.push(`${coverageLine(input)}.  \nConventions: ${describeConventions(c.conventions)}.`);
  parts.push(
    markdownTable(
      ['metric', 'A', 'B', 'Δ', '95% CI', 'p (t)', 'p (Wilcoxon)', 'p (randomization)', 'Holm', 'BH', 'wins / ties / losses'],
      // The space that aligns an unsigned zero Δ in the terminal means nothing in a Markdown cell.
      c.byMetric.map((r) => metricFigures(r).map((cell) => cell.trim())),
      ['left', 'right', 'right', 'right', 'left', 'right', 'right', 'right', 'right', 'right', 'right'],
    ),
  );
  parts.push(
    '<details><summary>How these were computed</summary>\n\n' +
      [...c.methodNotes, 'Holm and BH columns adjust the randomization p-values; wins are queries where B scores higher.']
        .map((n) => `- ${n}`)
        .join('\n') +
      '\n\n</details>',
  );
  if (c.warnings.length > 0) parts.push(c.warnings.map((w) => `- ${w}`).join('\n'));

  const headline = c.metrics[c.headline];
  if (options.top > 0 && headline) {
    const { drops, gains } = biggestChanges(input, options.top);
    parts.push(changeTable(`Biggest regressions in ${headline.key}`, drops));
    parts.push(changeTable(`Biggest improvements in ${headline.key}`, gains));
  }
  return parts.join('\n\n') + '\n';
}

function changeTable(title: string, changes: readonly QueryChange[]): string {
  if (changes.length === 0) return `#### ${title}\n\nNone.`;
  return (
    `#### ${title}\n\n` +
    markdownTable(
      ['#', 'query', 'A', 'B', 'Δ'],
      changes.map((ch, i) => [String(i + 1), ch.query, formatValue(ch.a), formatValue(ch.b), formatDelta(ch.delta).trim()]),
      ['right', 'left', 'right', 'right', 'right'],
    )
  );
}
