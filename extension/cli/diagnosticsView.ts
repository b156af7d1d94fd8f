/**
 * `gainline eval --diagnostics`, and the score section of `--query`: the score distribution per grade
 * and the DCG contribution by position against the ideal, from evaluate/diagnostics.ts, as text or JSON.
 */
import type { DcgByPosition, ScoresByGrade } from '../engine/evaluate/diagnostics';
import { formatValue, jsonNumber } from '../engine/report/reportInput';
import { alignedTable } from '../engine/report/textTable';

export function scoresByGradeJson(s: ScoresByGrade): unknown {
  return {
    edges: s.edges,
    grades: s.grades.map((g) => ({
      grade: g.grade, count: g.count, missing: g.missing,
      mean: jsonNumber(g.mean), min: jsonNumber(g.min), q1: jsonNumber(g.q1), median: jsonNumber(g.median), q3: jsonNumber(g.q3), max: jsonNumber(g.max),
      bins: g.bins,
    })),
  };
}

export function dcgByPositionJson(d: DcgByPosition): unknown {
  return {
    k: Number.isFinite(d.k) ? d.k : null,
    depth: d.depth,
    queries: d.queries,
    positions: d.predicted.map((p, i) => ({
      position: i < d.depth ? i + 1 : `>${d.depth}`,
      predicted: jsonNumber(p),
      ideal: jsonNumber(d.ideal[i]!),
      lost: jsonNumber(d.ideal[i]! - p),
    })),
  };
}

export function scoresByGradeText(s: ScoresByGrade): string {
  const bar = (bins: readonly number[]) => {
    const most = Math.max(1, ...bins);
    return bins.map((b) => ' ▁▂▃▄▅▆▇█'[Math.ceil((b / most) * 8)]).join('');
  };
  const low = s.edges[0];
  const high = s.edges[s.edges.length - 1];
  const range = low === undefined ? '' : ` (histogram from ${formatValue(low)} to ${formatValue(high!)})`;
  return `Scores per grade${range}\n` + alignedTable(
    ['grade', 'items', 'missing', 'min', 'q1', 'median', 'q3', 'max', 'mean', 'histogram'],
    s.grades.map((g) => [g.grade === null ? 'unjudged' : String(g.grade), String(g.count), String(g.missing), formatValue(g.min), formatValue(g.q1),
      formatValue(g.median), formatValue(g.q3), formatValue(g.max), formatValue(g.mean), bar(g.bins)]),
    ['left', 'right', 'right', 'right', 'right', 'right', 'right', 'right', 'right', 'left'],
  );
}

export function dcgByPositionText(d: DcgByPosition): string {
  const kText = Number.isFinite(d.k) ? `@${d.k}` : '';
  return `DCG${kText} by position, as a share of each query's ideal DCG${kText}, mean over ${d.queries} queries\n` + alignedTable(
    ['position', 'model', 'ideal', 'lost'],
    d.predicted.map((p, i) => [i < d.depth ? String(i + 1) : `>${d.depth}`, formatValue(p), formatValue(d.ideal[i]!), formatValue(d.ideal[i]! - p)]),
    ['right', 'right', 'right', 'right'],
  );
}
