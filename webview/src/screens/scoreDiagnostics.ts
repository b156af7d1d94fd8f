/**
 * Score diagnostics shown by the overview and the query detail: how each grade's scores are spread
 * (do the grades separate?) and, over all queries, where in the list the DCG is lost.
 */
import type { Chart } from 'chart.js';
import type { DcgByPositionView, ScoresByGradeView } from '../../../extension/protocol/messages';
import { exactValue, formatCount, formatFixed } from '../model/format';
import { seriesLinesChart, twoLineChart } from '../ui/charts';
import { el } from '../ui/dom';
import { staticTable } from '../ui/staticTable';

const gradeName = (g: number | null) => (g === null ? 'unjudged' : `grade ${g}`);
const fixed = (v: number | null) => (v === null ? '—' : formatFixed(v));

/**
 * Section with a table of score quartiles per grade and, when `charts` is given, a chart of each grade's
 * share of items per score bin (the chart goes into `charts` so the caller can destroy it).
 */
export function scoresByGradeSection(s: ScoresByGradeView, id: string, charts?: Chart[]): HTMLElement {
  const canvas = el('canvas', { attrs: { role: 'img', 'aria-label': `Score distribution per grade: ${s.grades.map((g) => `${gradeName(g.grade)} median ${fixed(g.median)}`).join('; ')}` } });
  const section = el('section', { id },
    el('h2', { text: 'Scores per grade' }),
    el('p', { className: 'gl-muted', text: charts
      ? 'Share of each grade’s items per score bin. Grades the model separates sit apart, higher grades to the right.'
      : 'Grades the model separates have quartiles that do not overlap, rising with the grade.' }),
    ...(charts ? [el('div', { className: 'gl-chart' }, canvas)] : []),
    staticTable({
      caption: 'Score quartiles per grade',
      columns: [
        { label: 'Grade' }, { label: 'Items', numeric: true }, { label: 'No score', numeric: true, title: 'Missing or non-finite scores, left out of the statistics.' },
        { label: 'Q1', numeric: true, title: 'First quartile (linear interpolation between order statistics).' },
        { label: 'Median', numeric: true }, { label: 'Q3', numeric: true }, { label: 'Mean', numeric: true },
      ],
      rows: s.grades.map((g) => [gradeName(g.grade), formatCount(g.count), formatCount(g.missing),
        { text: fixed(g.q1), title: g.q1 === null ? '' : exactValue(g.q1) }, { text: fixed(g.median), title: g.median === null ? '' : exactValue(g.median) },
        { text: fixed(g.q3), title: g.q3 === null ? '' : exactValue(g.q3) }, { text: fixed(g.mean), title: g.mean === null ? '' : exactValue(g.mean) }]),
    }),
  );
  if (charts && s.edges.length > 1) {
    const labels = s.edges.slice(0, -1).map((e, i) => formatFixed((e + s.edges[i + 1]!) / 2, 2));
    charts.push(seriesLinesChart(canvas, {
      labels,
      series: s.grades.map((g) => ({ label: gradeName(g.grade), values: g.bins.map((b) => (g.count > 0 ? b / g.count : null)), muted: g.grade === null })),
      xTitle: 'score (bin centre)',
      yTitle: 'share of the grade’s items',
    }));
  }
  return section;
}

/** Section with the mean share of ideal DCG earned per position, model against ideal. */
export function dcgByPositionSection(d: DcgByPositionView, charts: Chart[]): HTMLElement {
  const at = d.k === null ? '' : `@${d.k}`;
  const canvas = el('canvas', { attrs: { role: 'img', 'aria-label': `DCG${at} by position, model against ideal, positions 1 to ${d.depth}` } });
  const lost = d.predicted.map((p, i) => (p === null || d.ideal[i] === null ? null : d.ideal[i]! - p));
  const beyond = d.predicted[d.depth];
  const section = el('section', { id: 'gl-dcg-by-position' },
    el('h2', { text: `Where the DCG${at} is lost` }),
    el('p', { className: 'gl-muted', text: `Each position’s contribution as a share of its query’s ideal DCG${at}, averaged over ${formatCount(d.queries)} queries. ` +
      `The model’s line sums to the mean NDCG${at}, the ideal’s to 1; the gap at a position is the NDCG lost there.` +
      (beyond !== null && beyond !== undefined && beyond > 0 ? ` Positions after ${d.depth} add ${formatFixed(beyond)}.` : '') }),
    el('div', { className: 'gl-chart' }, canvas),
    staticTable({
      caption: `DCG${at} share by position`,
      columns: [{ label: 'Position', numeric: true }, { label: 'Model', numeric: true }, { label: 'Ideal', numeric: true }, { label: 'Lost', numeric: true, title: 'Ideal minus model.' }],
      rows: d.predicted.map((p, i) => [i < d.depth ? String(i + 1) : `>${d.depth}`, fixed(p), fixed(d.ideal[i] ?? null), fixed(lost[i] ?? null)]),
    }),
  );
  const positions = Array.from({ length: d.depth }, (_, i) => i + 1);
  charts.push(twoLineChart(canvas, {
    x: positions,
    a: d.predicted.slice(0, d.depth).map((v) => v ?? NaN),
    b: d.ideal.slice(0, d.depth).map((v) => v ?? NaN),
    aLabel: 'model order',
    bLabel: 'ideal order',
    xTitle: 'position',
    yTitle: `share of ideal DCG${at}`,
  }));
  return section;
}
