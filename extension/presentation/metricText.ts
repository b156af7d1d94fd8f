/**
 * Metric labels, tooltips and the README's metric table, all read from the metric registry, so a new
 * registry entry shows up everywhere with its own words.
 */
import type { MetricDefinition } from '../engine/metrics/definition';
import { explainMetricKey, METRIC_DEFINITIONS, metricLabel } from '../engine/metrics/registry';

export { metricLabel };

/** How one metric is computed for one query, then the conventions it was computed under. */
export function explainMetric(key: string, conventionsSummary: string): string {
  return `${explainMetricKey(key)}\nConventions: ${conventionsSummary}.`;
}

/** The keys a user may write for one metric: "`ndcg`, `ndcg@k`". */
function keySyntax(d: MetricDefinition): string {
  return d.cutoff === 'none' ? `\`${d.name}\`` : `\`${d.name}\`, \`${d.name}@${d.cutoffWord === 'depth' ? 'd' : 'k'}\``;
}

export const METRIC_TABLE_START = '<!-- metric table: generated from the metric registry by test/support/metric-table.mjs -->';
export const METRIC_TABLE_END = '<!-- end of metric table -->';

/** The README's metric table, between its markers (a test holds the README equal to this). */
export function metricTableMarkdown(): string {
  const rows = METRIC_DEFINITIONS.map((d: MetricDefinition) => {
    const policy = d.normalised ? '0, 1 or left out (policy)' : 'its own value (left out under skip)';
    return `| ${keySyntax(d)} | ${d.label} | ${d.formula} | ${d.ties} | ${policy} | ${d.reference} |`;
  });
  return [
    METRIC_TABLE_START,
    '| key | label | definition | ties and edge cases | nothing relevant | source |',
    '| --- | --- | --- | --- | --- | --- |',
    ...rows,
    METRIC_TABLE_END,
  ].join('\n');
}
