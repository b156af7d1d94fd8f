/**
 * Overview of one run: the headline metric and the others with the conventions they depend on, the
 * distribution of the per-query headline value, how the headline moves under other conventions,
 * and what degenerate data was found and done about.
 */
import type { Chart } from 'chart.js';
import type { JudgmentsView, OverviewModel, SensitivityView } from '../../../extension/protocol/messages';
import { DEGENERATE_EXPLANATIONS, explainMetric } from '../model/explain';
import { exactValue, formatCount, formatDelta, formatFixed, formatShare } from '../model/format';
import { barChart } from '../ui/charts';
import type { AppContext } from '../ui/context';
import { afterPaint, button, clear, el } from '../ui/dom';
import { staticTable } from '../ui/staticTable';
import { dcgByPositionSection, scoresByGradeSection } from './scoreDiagnostics';

const num = (v: number | null): number => (v === null ? NaN : v);

export class OverviewScreen {
  readonly element = el('div', { id: 'gl-overview' });
  private chart: Chart | undefined;
  private diagnosticCharts: Chart[] = [];
  /** Bumped by each render, so diagnostics that arrive for an older model are dropped. */
  private renders = 0;

  constructor(private readonly ctx: AppContext) {}

  render(model: OverviewModel): void {
    const generation = ++this.renders;
    this.chart?.destroy();
    for (const c of this.diagnosticCharts) c.destroy();
    this.diagnosticCharts = [];
    clear(this.element);
    const headline = model.metrics[model.headline]!;
    const conv = model.conventions.summary;
    const file = model.file;

    this.element.appendChild(
      el('p', {
        className: 'gl-muted',
        text: `${file.name} · ${file.format} · ${formatCount(file.rowCount)} rows · ${formatCount(model.queryCount)} queries · computed in ${formatCount(model.loadMs)} ms`,
        title: file.path,
      }),
    );

    const cards = el('div', { className: 'gl-cards', attrs: { role: 'list', 'aria-label': 'Mean of each metric over counted queries' } });
    cards.appendChild(
      el(
        'div',
        { className: 'gl-card headline', attrs: { role: 'listitem' }, title: `${explainMetric(headline.key, conv)}\nMean over ${headline.counted} counted queries; exact value ${exactValue(num(headline.mean))}.` },
        el('div', { id: 'gl-headline-label', className: 'label', text: headline.label }),
        el('div', { id: 'gl-headline-value', className: 'value', text: formatFixed(num(headline.mean), 4) }),
        el('div', { className: 'sub', text: `mean of ${formatCount(headline.counted)} of ${formatCount(model.queryCount)} queries` }),
      ),
    );
    model.metrics.forEach((m, i) => {
      if (i === model.headline) return;
      cards.appendChild(
        el(
          'div',
          { className: 'gl-card', attrs: { role: 'listitem' }, title: `${explainMetric(m.key, conv)}\nMean over ${m.counted} counted queries; exact value ${exactValue(num(m.mean))}.` },
          el('div', { className: 'label', text: m.label }),
          el('div', { className: 'value', text: formatFixed(num(m.mean), 4) }),
          el('div', { className: 'sub', text: `${formatCount(m.counted)} queries` }),
        ),
      );
    });
    this.element.appendChild(cards);

    const c = model.conventions;
    const conventions = el('dl', { id: 'gl-conventions', className: 'gl-conventions', attrs: { 'aria-label': 'Conventions used' } });
    const pairs: [string, string, string][] = [
      ['Gain', c.gain, 'How a grade becomes a gain.'],
      ['Ties', c.ties, 'How items with equal scores are ordered: average = expected value over all orders of each tied group (McSherry & Najork 2008).'],
      ['Nothing relevant', c.noRelevant, 'What a query with no relevant item scores: skip (left out of means), zero or one.'],
      ['Relevant from grade', String(c.relevantFrom), 'Grade at or above which an item counts as relevant for binary metrics.'],
      ['ERR maximum grade', c.maxGrade === null ? 'highest grade in the data' : String(c.maxGrade), 'g_max in ERR’s stopping probability (2^g − 1) / 2^g_max.'],
      ['RBP persistence', formatFixed(c.rbpPersistence, 2), 'p in rank-biased precision.'],
    ];
    if (model.weighting) pairs.push(['Query weights', model.weighting, 'Means are weighted by query: Σ w·x / Σ w. Queries without a weight are left out.']);
    for (const [k, v, why] of pairs) conventions.append(el('dt', { text: k, title: why }), el('dd', { text: v, title: why }));

    const canvas = el('canvas', {
      attrs: { role: 'img', 'aria-label': `Histogram of per-query ${headline.label}: ${model.histogram.counts.join(', ')} queries in ${model.histogram.counts.length} equal bins from ${model.histogram.lower} to ${model.histogram.upper}` },
    });
    const histBox = el('div', { className: 'gl-chart' }, canvas);

    this.element.appendChild(
      el(
        'div',
        { className: 'gl-grid2' },
        el('section', {}, el('h2', { text: `Per-query ${headline.label}` }), histBox,
          el('p', { className: 'gl-muted', text: `Queries per equal-width bin; skipped queries are not shown. The last bin includes ${formatFixed(model.histogram.upper, 1)}.` })),
        el('section', {}, el('h2', { text: 'Conventions' }), conventions,
          el('p', { className: 'gl-muted', text: 'Change them in the settings under gainline.*; the view recomputes.' })),
      ),
    );
    // Drawn after the first paint: creating the chart costs as much as the rest of the overview, and the
    // headline should not wait for it.
    afterPaint(() => {
      if (generation === this.renders) this.chart = this.histogram(canvas, model);
    });

    this.element.appendChild(el('h2', { text: `How ${headline.label} depends on the conventions` }));
    const sensitivityBox = el('div', { id: 'gl-sensitivity-box' }, sensitivityTable(model, model.sensitivity));
    if (model.sensitivityLater) {
      sensitivityBox.setAttribute('aria-busy', 'true');
      sensitivityBox.append(el('p', { className: 'gl-muted', text: 'Computing the headline under the other conventions…' }));
    }
    this.element.appendChild(sensitivityBox);

    const diagnostics = el('div', { id: 'gl-score-diagnostics', className: 'gl-grid2', attrs: { 'aria-busy': 'true' } },
      el('p', { className: 'gl-muted', text: 'Computing the score diagnostics…' }));
    this.element.appendChild(diagnostics);

    this.element.appendChild(el('h2', { text: 'Data found and how it was handled' }));
    const d = model.degenerate as unknown as Record<string, number>;
    this.element.appendChild(
      staticTable({
        id: 'gl-degenerate',
        caption: 'Degenerate data counts and their handling',
        columns: [{ label: 'Found' }, { label: 'Count', numeric: true }, { label: 'Share', numeric: true, title: 'Of rows, or of queries for query counts.' }, { label: 'What was done' }],
        rows: Object.entries(DEGENERATE_EXPLANATIONS).map(([key, info]) => {
          const count = d[key] ?? 0;
          const ofQueries = key.endsWith('Queries');
          const denominator = ofQueries ? model.queryCount : file.rowCount;
          return [info.label, formatCount(count), denominator > 0 ? formatShare(count / denominator) : '', info.handling];
        }).concat(model.judgments ? judgmentRows(model.judgments, model.queryCount) : []),
      }),
    );
    if (model.warnings.length > 0) {
      const list = el('ul', { className: 'gl-warnings' });
      for (const w of model.warnings) list.appendChild(el('li', { text: w }));
      this.element.append(el('h2', { text: 'Notes' }), list);
    }
    this.element.appendChild(
      el('div', { className: 'gl-toolbar' },
        button('Export summary as Markdown', { icon: 'markdown', secondary: true, onClick: () => this.export(model, 'markdown') }),
        button('Export summary as CSV', { icon: 'export', secondary: true, onClick: () => this.export(model, 'csv') })),
    );
    // Both follow-ups wait for the first paint, so the headline is never behind them.
    afterPaint(() => {
      if (model.sensitivityLater) void this.fillSensitivity(sensitivityBox, model, generation);
      void this.fillDiagnostics(diagnostics, generation);
    });
  }

  /** The headline under other conventions, when the model came without it (asked for after the first paint). */
  private async fillSensitivity(box: HTMLElement, model: OverviewModel, generation: number): Promise<void> {
    if (generation !== this.renders) return;
    let rows: readonly SensitivityView[];
    try {
      rows = await this.ctx.request('overviewSensitivity', {});
    } catch (e) {
      if (generation !== this.renders) return;
      box.removeAttribute('aria-busy');
      box.lastElementChild!.textContent = `Could not compute the headline under the other conventions: ${(e as Error).message}`;
      return;
    }
    if (generation !== this.renders) return;
    clear(box);
    box.removeAttribute('aria-busy');
    box.append(sensitivityTable(model, rows));
  }

  /**
   * The score diagnostics take another pass over every query, as long as scoring them: they are asked
   * for once the rest of the overview, headline first, has been painted.
   */
  private async fillDiagnostics(box: HTMLElement, generation: number): Promise<void> {
    if (generation !== this.renders) return;
    try {
      const d = await this.ctx.request('overviewDiagnostics', {});
      if (generation !== this.renders) return;
      clear(box);
      box.removeAttribute('aria-busy');
      // The box is in the page before the charts are drawn: chart.js sizes a canvas from its place.
      box.append(scoresByGradeSection(d.scoresByGrade, 'gl-scores-by-grade', this.diagnosticCharts),
        dcgByPositionSection(d.dcgByPosition, this.diagnosticCharts));
    } catch (e) {
      if (generation !== this.renders) return;
      clear(box);
      box.removeAttribute('aria-busy');
      box.append(el('p', { className: 'gl-muted', text: `Could not compute the score diagnostics: ${(e as Error).message}` }));
    }
  }

  private histogram(canvas: HTMLCanvasElement, model: OverviewModel): Chart {
    const h = model.histogram;
    const n = h.counts.length;
    const width = (h.upper - h.lower) / n;
    const labels: string[] = [];
    const tips: string[] = [];
    for (let i = 0; i < n; i++) {
      const lo = h.lower + i * width;
      const hi = i === n - 1 ? h.upper : h.lower + (i + 1) * width;
      const interval = `[${formatFixed(lo, 1)}, ${formatFixed(hi, 1)}${i === n - 1 ? ']' : ')'}`;
      labels.push(interval);
      tips.push(`${formatCount(h.counts[i]!)} queries with ${model.metrics[model.headline]!.label} in ${interval}`);
    }
    return barChart(canvas, { labels, counts: h.counts, tooltips: tips, xTitle: model.metrics[model.headline]!.label, yTitle: 'queries', seriesLabel: 'queries' });
  }

  private export(model: OverviewModel, format: 'markdown' | 'csv'): void {
    this.ctx.exportTable({
      format,
      destination: 'file',
      title: `${model.file.name} summary`,
      columns: ['Metric', 'Mean', 'Queries counted', 'Conventions'],
      rows: model.metrics.map((m) => [m.label, m.mean, m.counted, model.conventions.summary]),
    });
  }
}

/** Rows of the data table for labels joined from a judgments file. */
function judgmentRows(j: JudgmentsView, queryCount: number): string[][] {
  return [
    ['Judged items never retrieved', formatCount(j.unretrieved), '', 'Counted in the ideal ranking and in recall and AP; not in the list.'],
    ['Judged queries missing from the run', formatCount(j.absentQueries), queryCount > 0 && j.missingQueries === 'zero' ? formatShare(j.absentQueries / queryCount) : '',
      j.missingQueries === 'zero' ? 'Scored 0 on every metric (missing queries: zero).' : 'Left out of every mean (missing queries: skip).'],
    ['Dump labels the judgments overrule', formatCount(j.disagreements), '', 'The judgments file wins.'],
  ];
}

/**
 * The headline mean under each alternative convention. The current settings come first, once (the
 * engine repeats them once per dimension); `rows` may be empty while they are being computed.
 */
function sensitivityTable(model: OverviewModel, rows: readonly SensitivityView[]): HTMLElement {
  const headline = model.metrics[model.headline]!;
  return staticTable({
    id: 'gl-sensitivity',
    caption: 'Headline metric under alternative conventions',
    columns: [
      { label: 'Convention changed', title: 'One convention changed from the current setting, the rest kept.' },
      { label: headline.label, numeric: true, title: 'Mean over counted queries under that convention.' },
      { label: 'Δ vs current', numeric: true, title: 'That mean minus the current headline mean.' },
      { label: 'Queries counted', numeric: true, title: 'Queries that entered the mean.' },
    ],
    rows: [
      [{ text: 'current settings' }, { text: formatFixed(num(headline.mean)), title: exactValue(num(headline.mean)) }, '', formatCount(headline.counted)],
      ...rows.filter((s) => !s.current).map((s) => s.unavailable !== undefined ? [
        s.label,
        { text: 'n/a', title: s.unavailable },
        { text: '', title: s.unavailable },
        formatCount(s.counted),
      ] : [
        s.label,
        { text: formatFixed(num(s.mean)), title: exactValue(num(s.mean)) },
        { text: formatDelta(num(s.delta)), title: `${exactValue(num(s.delta))} (mean under "${s.label}" minus current mean)` },
        formatCount(s.counted),
      ]),
    ],
  });
}
