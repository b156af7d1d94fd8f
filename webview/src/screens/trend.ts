/**
 * The trend of a training series: per metric, the mean at each checkpoint with its 95% interval as a
 * band, where it peaked, the queries that fell most (first to last, and from their own peak to the
 * last), and one query's trajectory. Clicking a checkpoint (on a chart or in the table) opens that dump
 * in the viewer; any two checkpoints can be compared in the two-run comparison. On a live refresh
 * (the job wrote another checkpoint) the chosen query and checkpoints are kept.
 */
import type { Chart } from 'chart.js';
import type { CheckpointView, DropView, SeriesOverviewModel, TrajectoryView } from '../../../extension/protocol/messages';
import { exactValue, formatCount, formatDelta, formatFixed, formatMeanInterval } from '../model/format';
import { bandChart, seriesLinesChart } from '../ui/charts';
import type { AppContext } from '../ui/context';
import { button, clear, el, fillSelect, select } from '../ui/dom';

const fixed = (v: number | null): string => (v === null ? '—' : formatFixed(v));
const exact = (v: number | null): string => (v === null ? 'no value' : exactValue(v));

export class TrendScreen {
  readonly element = el('div', { id: 'gl-trend' });
  private readonly summary = el('section', { id: 'gl-trend-summary' });
  private readonly chartsArea = el('div', { id: 'gl-trend-charts', className: 'gl-grid2' });
  private readonly table = el('section', { id: 'gl-trend-checkpoints' });
  private readonly drops = el('div', { id: 'gl-trend-drops', className: 'gl-grid2' });
  private readonly trajectory = el('section', { id: 'gl-trend-trajectory' });
  private readonly compareBase = select({ id: 'gl-trend-base', label: 'Baseline', values: [] }, () => undefined);
  private readonly compareOther = select({ id: 'gl-trend-other', label: 'Compare with', values: [] }, () => undefined);
  private charts: Chart[] = [];
  private trajectoryChart: Chart | undefined;
  private model: SeriesOverviewModel | undefined;
  private query: string | null = null;
  /** Answers to an older trajectory request are dropped. */
  private asked = 0;

  constructor(private readonly ctx: AppContext) {
    const compare = el('section', { id: 'gl-trend-compare' },
      el('h2', { text: 'Compare two checkpoints' }),
      el('div', { className: 'gl-toolbar' }, this.compareBase.wrapper, this.compareOther.wrapper,
        button('Compare with baseline', { id: 'gl-trend-compare-button', icon: 'diff', onClick: () => this.compare() })));
    this.element.append(this.summary, this.chartsArea, this.table, compare, this.drops, this.trajectory);
  }

  render(model: SeriesOverviewModel, keep: boolean): void {
    const before = keep ? { base: this.compareBase.select.value, other: this.compareOther.select.value } : undefined;
    this.model = model;
    this.renderSummary(model);
    this.renderCharts(model);
    this.renderTable(model);
    this.renderCompareChoices(model, before);
    this.renderDrops(model);
    if (!keep) this.query = null;
    if (this.query !== null) void this.show(this.query);
    else this.renderTrajectoryHint();
  }

  /** Shows one query's values over the checkpoints (picked here or anywhere else). */
  async show(query: string): Promise<void> {
    this.query = query;
    const asked = ++this.asked;
    try {
      const view = await this.ctx.request('seriesTrajectory', { query });
      if (asked === this.asked) this.renderTrajectory(view);
    } catch (e) {
      if (asked === this.asked) this.ctx.notify(`No trajectory for ${query}: ${(e as Error).message}`, true);
    }
  }

  clear(): void {
    this.query = null;
    this.renderTrajectoryHint();
  }

  private renderSummary(m: SeriesOverviewModel): void {
    clear(this.summary);
    const n = m.checkpoints.length;
    this.summary.append(
      el('h2', { text: m.name }),
      el('p', { className: 'gl-muted', text: `${formatCount(n)} checkpoint${n === 1 ? '' : 's'}, ${m.orderRule} · ${formatCount(m.queryCount)} queries, ` +
        `${formatCount(m.inEveryCheckpoint)} in every checkpoint · ${m.conventions.summary} · 95% intervals: percentile bootstrap, ` +
        `${formatCount(m.bootstrap.resamples)} resamples, seed ${m.bootstrap.seed} · ${formatCount(m.scoredNow)} read now, ${formatCount(m.loadMs)} ms` }),
    );
    if (m.unread.length > 0) {
      this.summary.append(el('div', { id: 'gl-trend-unread', className: 'gl-note', attrs: { role: 'status' } },
        el('strong', { text: `Not read yet (${m.unread.length}): ` }),
        el('span', { text: m.unread.map((u) => `${u.run}: ${u.message}`).join(' · ') }),
        el('span', { className: 'gl-muted', text: ' It is read again when the file changes.' })));
    }
    const notes = m.warnings.filter((w) => !m.unread.some((u) => w.startsWith(`${u.run} was not read`)));
    if (notes.length > 0) this.summary.append(el('ul', { className: 'gl-warnings' }, ...notes.map((w) => el('li', { text: w }))));
  }

  private renderCharts(m: SeriesOverviewModel): void {
    for (const c of this.charts) c.destroy();
    this.charts = [];
    clear(this.chartsArea);
    const labels = m.checkpoints.map((c) => c.run);
    m.metrics.forEach((metric, i) => {
      const peak = m.peaks[i] ?? null;
      const values = m.checkpoints.map((c) => c.means[i] ?? null);
      const canvas = el('canvas', {
        attrs: {
          role: 'img',
          'aria-label': `${metric.label} per checkpoint: ${m.checkpoints.map((c) => `${c.run} ${fixed(c.means[i] ?? null)}`).join('; ')}`,
          // The points as drawn, for keyboard users' tools and the end-to-end check against the command line.
          'data-labels': JSON.stringify(labels),
          'data-values': JSON.stringify(values),
        },
      });
      const peakText = peak === null ? 'no mean yet' : `peak ${fixed(m.checkpoints[peak]!.means[i] ?? null)} at ${m.checkpoints[peak]!.run}`;
      this.chartsArea.append(el('section', { className: 'gl-trend-metric', attrs: { 'data-metric': metric.key } },
        el('h3', { text: `${metric.label} · ${peakText}` }),
        el('div', { className: 'gl-chart' }, canvas)));
      this.charts.push(bandChart(canvas, {
        labels, values,
        lower: m.checkpoints.map((c) => c.lower[i] ?? null),
        upper: m.checkpoints.map((c) => c.upper[i] ?? null),
        seriesLabel: `mean ${metric.label}`, bandLabel: '95% interval', marked: peak,
        xTitle: 'checkpoint', yTitle: metric.label,
        tooltips: m.checkpoints.map((c) => `${metric.label} ${fixed(c.means[i] ?? null)} ${intervalText(c, i)} over ${formatCount(c.counted[i] ?? 0)} queries (click to open)`),
        onPick: (k) => this.open(m.checkpoints[k]!),
      }));
    });
  }

  private renderTable(m: SeriesOverviewModel): void {
    clear(this.table);
    const head = el('tr', {}, ...['#', 'Checkpoint', 'Queries', ...m.metrics.map((x) => x.label)].map((t, i) => el('th', { text: t, className: i === 1 ? undefined : 'num', attrs: { scope: 'col' } })));
    const rows = m.checkpoints.map((c, k) => el('tr', { attrs: { 'data-checkpoint': c.run } },
      el('td', { className: 'num', text: String(k + 1) }),
      el('td', {}, button(c.run, { secondary: true, title: `Open ${c.path} in the viewer`, onClick: () => this.open(c) })),
      el('td', { className: 'num', text: formatCount(c.queries), title: c.missing > 0 ? `lacks ${formatCount(c.missing)} of the series' queries` : '' }),
      ...m.metrics.map((_, i) => el('td', {
        className: `num${m.peaks[i] === k ? ' gl-peak' : ''}`,
        text: `${fixed(c.means[i] ?? null)}${m.peaks[i] === k ? ' ▲' : ''}`,
        title: `exact ${exact(c.means[i] ?? null)}; 95% interval ${intervalText(c, i)}${m.peaks[i] === k ? '; the peak' : ''}`,
      }))));
    this.table.append(el('h2', { text: 'Mean per checkpoint (▲ peak)' }),
      el('table', { id: 'gl-trend-table', className: 'gl-table', attrs: { 'aria-label': 'Mean of each metric per checkpoint' } }, el('thead', {}, head), el('tbody', {}, ...rows)));
  }

  private renderCompareChoices(m: SeriesOverviewModel, before: { base: string; other: string } | undefined): void {
    const values = m.checkpoints.map((c) => ({ value: c.path, text: c.run }));
    const has = (path: string | undefined) => path !== undefined && m.checkpoints.some((c) => c.path === path);
    const first = m.checkpoints[0]?.path;
    const last = m.checkpoints.at(-1)?.path;
    fillSelect(this.compareBase.select, values, has(before?.base) ? before!.base : first);
    fillSelect(this.compareOther.select, values, has(before?.other) ? before!.other : last);
  }

  private renderDrops(m: SeriesOverviewModel): void {
    clear(this.drops);
    const headline = m.metrics[m.headline]?.label ?? '';
    this.drops.append(
      this.dropTable('gl-trend-first-to-last', `${headline}: fell most from the first checkpoint to the last`,
        `${formatCount(m.comparableFirstToLast)} queries were scored at both.`, m.worstFirstToLast, m),
      this.dropTable('gl-trend-peak-to-last', `${headline}: fell most from their own peak to the last checkpoint`,
        'Each query against its highest earlier value.', m.worstPeakToLast, m),
    );
  }

  private dropTable(id: string, title: string, note: string, drops: readonly DropView[], m: SeriesOverviewModel): HTMLElement {
    const head = el('tr', {}, ...['Query', 'From', 'At', 'Last', 'Δ'].map((t, i) => el('th', { text: t, className: i === 0 || i === 2 ? undefined : 'num', attrs: { scope: 'col' } })));
    const rows = drops.map((d) => el('tr', {},
      el('td', {}, button(d.query, { secondary: true, title: 'Show its trajectory over the checkpoints', onClick: () => this.ctx.openQuery(d.query) })),
      el('td', { className: 'num', text: fixed(d.from), title: exact(d.from) }),
      el('td', { text: m.checkpoints[d.fromCheckpoint]?.run ?? '' }),
      el('td', { className: 'num', text: fixed(d.last), title: exact(d.last) }),
      el('td', { className: 'num gl-worse', text: d.delta === null ? '—' : formatDelta(d.delta), title: exact(d.delta) })));
    return el('section', { id },
      el('h2', { text: title }),
      el('p', { className: 'gl-muted', text: drops.length === 0 ? `${note} None fell.` : note }),
      el('table', { className: 'gl-table', attrs: { 'aria-label': title } }, el('thead', {}, head), el('tbody', {}, ...rows)));
  }

  private renderTrajectoryHint(): void {
    this.trajectoryChart?.destroy();
    this.trajectoryChart = undefined;
    clear(this.trajectory);
    this.trajectory.append(el('h2', { text: 'One query over the checkpoints' }), this.querySearch(),
      el('p', { className: 'gl-muted', text: 'Pick a query above or in the lists of falls to see its values at every checkpoint.' }));
  }

  private renderTrajectory(view: TrajectoryView): void {
    const m = this.model;
    if (!m) return;
    this.trajectoryChart?.destroy();
    clear(this.trajectory);
    const labels = m.checkpoints.map((c) => c.run);
    const canvas = el('canvas', { attrs: { role: 'img', 'aria-label': `${view.query} over the checkpoints`, 'data-labels': JSON.stringify(labels), 'data-values': JSON.stringify(view.values) } });
    const head = el('tr', {}, ...['Checkpoint', ...m.metrics.map((x) => x.label)].map((t, i) => el('th', { text: t, className: i === 0 ? undefined : 'num', attrs: { scope: 'col' } })));
    const rows = m.checkpoints.map((c, k) => el('tr', {}, el('td', { text: c.run }),
      ...m.metrics.map((_, i) => el('td', { className: 'num', text: fixed(view.values[i]?.[k] ?? null), title: exact(view.values[i]?.[k] ?? null) }))));
    this.trajectory.append(
      el('h2', { id: 'gl-trend-trajectory-title', text: `${view.query} over the checkpoints` }),
      this.querySearch(),
      el('div', { className: 'gl-chart tall' }, canvas),
      el('table', { id: 'gl-trend-trajectory-table', className: 'gl-table', attrs: { 'aria-label': `${view.query} per checkpoint` } }, el('thead', {}, head), el('tbody', {}, ...rows)),
    );
    this.trajectoryChart = seriesLinesChart(canvas, {
      labels,
      series: m.metrics.map((x, i) => ({ label: x.label, values: view.values[i] ?? [] })),
      xTitle: 'checkpoint',
      yTitle: 'value',
    });
  }

  /** A query box: the series' queries containing the text, asked of the worker a page at a time. */
  private querySearch(): HTMLElement {
    const list = el('datalist', { id: 'gl-trend-query-list' });
    const input = el('input', { id: 'gl-trend-query', className: 'gl-input', attrs: { type: 'search', list: 'gl-trend-query-list', placeholder: 'Query…', 'aria-label': 'Query to show' } });
    input.value = this.query ?? '';
    input.addEventListener('input', () => {
      void this.ctx.request('seriesQueries', { filter: input.value, limit: 50 }).then((r) => {
        clear(list);
        for (const q of r.queries) list.appendChild(el('option', { attrs: { value: q } }));
      }, () => undefined);
    });
    input.addEventListener('change', () => {
      if (input.value !== '') this.ctx.openQuery(input.value);
    });
    return el('div', { className: 'gl-toolbar' }, input, list);
  }

  private open(c: CheckpointView): void {
    this.ctx.request('openCheckpoint', { path: c.path }).then(
      () => this.ctx.notify(`Opened ${c.run}.`),
      (e: Error) => this.ctx.notify(`Could not open ${c.run}: ${e.message}`, true),
    );
  }

  private compare(): void {
    const base = this.compareBase.select.value;
    const other = this.compareOther.select.value;
    const name = (path: string) => this.model?.checkpoints.find((c) => c.path === path)?.run ?? path;
    this.ctx.request('compareCheckpoints', { base, other }).then(
      () => this.ctx.notify(`Comparing ${name(base)} (baseline) with ${name(other)}.`),
      (e: Error) => this.ctx.notify(`Could not compare: ${e.message}`, true),
    );
  }
}

function intervalText(c: CheckpointView, i: number): string {
  const low = c.lower[i] ?? null;
  const high = c.upper[i] ?? null;
  return low === null || high === null ? '(no interval)' : formatMeanInterval(low, high);
}
