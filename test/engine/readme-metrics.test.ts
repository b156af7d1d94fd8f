/**
 * The README's metric table is generated from the metric registry (test/support/metric-table.mjs
 * --write); this fails as soon as the two differ, so the documented definitions cannot drift.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { METRIC_TABLE_END, METRIC_TABLE_START, metricTableMarkdown } from '../../extension/presentation/metricText';
import { METRIC_DEFINITIONS } from '../../extension/engine/metrics/registry';

describe('README metric table', () => {
  const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');
  it('equals the table generated from the registry (run node test/support/metric-table.mjs --write)', () => {
    const start = readme.indexOf(METRIC_TABLE_START);
    const end = readme.indexOf(METRIC_TABLE_END);
    expect(start).toBeGreaterThanOrEqual(0);
    expect(readme.slice(start, end + METRIC_TABLE_END.length)).toBe(metricTableMarkdown());
  });
  it('has one row per registry entry', () => {
    const rows = metricTableMarkdown().split('\n').filter((line) => line.startsWith('| `'));
    expect(rows.map((r) => /^\| `([a-z]+)`/.exec(r)![1])).toEqual(METRIC_DEFINITIONS.map((d) => d.name));
  });
});
