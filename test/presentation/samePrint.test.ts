/**
 * The same number prints the same on every output path: the CLI table and Markdown reports, CSV and
 * JSON (full precision, read back exactly), the editor's view models as the webview formats them, the
 * editor's table export and the status bar. The values are ties of decimal rounding on purpose:
 * P@32 = 1/32 = 0.03125 exactly (binary), so half-up would print 0.0313 and half-even 0.0312. The rule
 * is round-half-even on the exact binary value, as Python's format(x, ".4f") does (checked against
 * Python itself in test/webview/format.test.ts); 0.0312 is also what Python prints for 1/32.
 */
import { describe, expect, it } from 'vitest';
import { evaluate } from '../../extension/engine/evaluate/evaluate';
import { DEFAULT_CONVENTIONS } from '../../extension/engine/metrics/conventions';
import { parseMetricList } from '../../extension/engine/metrics/parse';
import { formatReport } from '../../extension/engine/report/index';
import { formatP as reportP, metricFigures } from '../../extension/engine/report/compareShared';
import type { MetricComparison } from '../../extension/engine/compare/compare';
import { overviewModel } from '../../extension/worker/viewModels';
import { formatExport, formatHeadline } from '../../extension/host/exportTable';
import { formatFixed, formatP as webviewP, formatDelta as webviewDelta } from '../../webview/src/model/format';
import { buildDump, type TestRow } from '../engine/dumpBuilder';
import { pythonJson } from '../reference/python.mjs';

/** One query of 40 items, one relevant at position 1: P@32 = 1/32 exactly. */
function rows(): TestRow[] {
  return Array.from({ length: 40 }, (_, i) => ({ query: 'hex bolts m8', item: `sku-${i}`, label: i === 0 ? 1 : 0, score: 40 - i }));
}

describe('one way to print a number', () => {
  const dump = buildDump(rows());
  const evaluation = evaluate(dump, parseMetricList('p@32,ndcg@10'), DEFAULT_CONVENTIONS);
  const input = { evaluation, queryNames: dump.queries, source: 'runs/bolts.csv', rowCount: dump.rowCount };

  it('P@32 = 1/32 is 0.0312 in the CLI table, Markdown, the editor, its export and the status bar', () => {
    expect(evaluation.perQuery.values[0]![0]).toBe(1 / 32);
    const python = pythonJson<string>('import json,sys\nprint(json.dumps(format(json.load(sys.stdin), ".4f")))', 1 / 32);
    expect(python).toBe('0.0312'); // Python's format(): round-half-even on the exact value
    const table = formatReport('table', input, { worst: 5 });
    const markdown = formatReport('markdown', input, { worst: 5 });
    for (const text of [table, markdown]) {
      expect(text).toMatch(/p@32\D+0\.0312\b/); // the mean
      expect(text).not.toContain('0.0313');
    }
    // The editor: view model numbers formatted by the webview's (shared) formatter.
    const overview = overviewModel(dump, evaluation, 0);
    const column = overview.metrics.find((m) => m.key === 'p@32')!;
    expect(formatFixed(column.mean ?? NaN, 4)).toBe(python);
    expect(formatHeadline(column.label, column.mean)).toBe(`P@32 ${python}`);
    const exported = formatExport({ format: 'markdown', title: 'Worst queries', columns: ['Query', 'P@32'], rows: [['hex bolts m8', column.mean]] });
    expect(exported).toContain(`| ${python} |`);
  });

  it('CSV and JSON keep full precision and read back as the same double', () => {
    const csv = formatReport('csv', input, { worst: 5 });
    expect(csv.split('\n')[1]!.split(',')).toContain('0.03125');
    const json = JSON.parse(formatReport('json', input, { worst: 5 })) as { summary: Record<string, { mean: number }> ; queries: Record<string, unknown>[] };
    expect(json.queries[0]!['p@32']).toBe(1 / 32);
    const exportedCsv = formatExport({ format: 'csv', title: 't', columns: ['P@32'], rows: [[1 / 32]] });
    expect(exportedCsv).toBe('P@32\n0.03125\n');
  });

  it('p = 0.00007 is "<0.0001" in the CLI comparison reports and the editor alike', () => {
    expect(reportP(0.00007)).toBe('<0.0001');
    expect(webviewP(0.00007)).toBe('<0.0001');
    expect(webviewP(0.0001)).toBe('0.0001');
    const comparison = {
      key: 'ndcg@10',
      summary: { meanA: 0.5, meanB: 1 / 32, meanDifference: -0.00001, wins: 1, ties: 2, losses: 3 },
      interval: { low: -0.125, high: 0.375 },
      tTest: { p: 0.00007 },
      wilcoxon: { p: 0.03125 },
      randomization: { p: 0.5 },
      adjusted: { randomization: { holm: 1, benjaminiHochberg: 0.00005 } },
    } as unknown as MetricComparison;
    expect(metricFigures(comparison)).toEqual([
      'ndcg@10', '0.5000', '0.0312', webviewDelta(-0.00001), '[-0.1250, +0.3750]', '<0.0001', '0.0312', '0.5000', '1.0000', '<0.0001', '1 / 2 / 3',
    ]);
    expect(webviewDelta(-0.00001)).toBe('-0.0000'); // a tiny loss is not shown as no change
  });
});
