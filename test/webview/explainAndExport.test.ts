import { describe, expect, it } from 'vitest';
import { explainMetric, metricLabel } from '../../webview/src/model/explain';
import { cellText, exportParams, type ColumnDef } from '../../webview/src/model/tableModel';
import { formatFixed } from '../../webview/src/model/format';

describe('metric explanations', () => {
  it('parses keys and labels them as written in papers', () => {
    expect(metricLabel('ndcg@10')).toBe('NDCG@10');
    expect(metricLabel('p@5')).toBe('P@5');
    expect(metricLabel('tau')).toBe("Kendall's τ");
  });
  it('states the depth and the conventions', () => {
    const text = explainMetric('ndcg@10', 'gain exponential · ties average');
    expect(text).toContain('top 10');
    expect(text).toContain('log2(position + 1)');
    expect(text).toContain('gain exponential · ties average');
    expect(explainMetric('made-up', 'x')).toContain('no description');
  });
});

describe('table export', () => {
  interface Row {
    query: string;
    ndcg: number | null;
  }
  const columns: ColumnDef<Row>[] = [
    { key: 'query', label: 'Query', title: '', value: (r) => r.query },
    { key: 'ndcg@10', label: 'NDCG@10', title: '', value: (r) => r.ndcg, format: (v) => formatFixed(typeof v === 'number' ? v : NaN) },
  ];
  const rows: Row[] = [
    { query: 'cordless drill 18v', ndcg: 0.123456789 },
    { query: '<img src=x onerror=alert(1)>', ndcg: null },
  ];
  it('shows formatted text but exports full-precision raw values', () => {
    expect(cellText(columns[1]!, rows[0]!)).toBe('0.1235');
    expect(cellText(columns[1]!, rows[1]!)).toBe('—');
    const p = exportParams('Worst queries', columns, rows, 'csv', 'file');
    expect(p.columns).toEqual(['Query', 'NDCG@10']);
    expect(p.rows).toEqual([
      ['cordless drill 18v', 0.123456789],
      ['<img src=x onerror=alert(1)>', null],
    ]);
  });
});

describe('every default metric has an explanation', () => {
  it('covers the metrics the engine computes by default', async () => {
    const { DEFAULT_METRICS } = await import('../../extension/engine/metrics/registry');
    for (const key of DEFAULT_METRICS.split(',')) {
      expect(explainMetric(key, 'x'), key).not.toContain('no description');
    }
  });
});
