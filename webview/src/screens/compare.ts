/**
 * Compare overview: A against B per metric with intervals, effect size, win/tie/loss counts and
 * significance tests (raw or adjusted over the metrics), a per-query scatter (click a point to see
 * that query's movement) and the distribution of per-query differences.
 */
import type { Chart } from 'chart.js';
import type { CompareMetricRow, CompareOverviewModel, CompareRow } from '../../../extension/protocol/messages';
import { benjaminiHochberg, effectSizeDz } from '../model/compareStats';
import { COLUMN_EXPLANATIONS, explainMetric } from '../model/explain';
import { exactValue, formatCount, formatDelta, formatFixed, formatP, MISSING } from '../model/format';
import { binLabel, binValues, suggestedBins, symmetricRange } from '../model/histogram';
import { SAMPLES } from '../model/columnLayout';
import { exportParams, type Cell, type ColumnDef } from '../model/tableModel';
import { barChart, scatterChart } from '../ui/charts';
import type { AppContext } from '../ui/context';
import { button, clear, el, select } from '../ui/dom';
import { arraySource, VirtualTable } from '../ui/virtualTable';

type Adjust = 'none' | 'holm' | 'bh';
const CHUNK = 5000;
const MAX_POINTS = 200_000;

interface MetricLine {
  readonly row: CompareMetricRow;
  readonly dz: number | null;
  /** Per test name: raw p, Holm-adjusted (from the host), BH-adjusted (here). */
  readonly p: Readonly<Record<string, { raw: number | null; holm: number | null; bh: number | null; statistic: number | null }>>;
}

export class CompareScreen {
  readonly element = el('div', { id: 'gl-compare' });
  private model: CompareOverviewModel | undefined;
  private lines: MetricLine[] = [];
  private testNames: string[] = [];
  private adjust: Adjust = 'none';
  private charts: Chart[] = [];
  private table: VirtualTable<MetricLine> | undefined;
  private chartMetric = '';
  private token = 0;

  constructor(private readonly ctx: AppContext) {}

  render(model: CompareOverviewModel, keep: boolean): void {
    this.model = model;
    const headlineKey = model.metrics[model.headline]?.key ?? '';
    if (!keep || !model.metrics.some((m) => m.key === this.chartMetric)) this.chartMetric = headlineKey;
    this.computeLines(model);
    for (const c of this.charts) c.destroy();
    this.charts = [];
    clear(this.element);

    const headline = model.metrics[model.headline]!;
    this.element.append(
      el('p', { className: 'gl-muted', text: `A: ${model.runA.name} · B: ${model.runB.name} · ${formatCount(model.pairedQueries)} queries in both · ${formatCount(model.onlyInA)} only in A · ${formatCount(model.onlyInB)} only in B · computed in ${formatCount(model.loadMs)} ms`, title: `A: ${model.runA.path}\nB: ${model.runB.path}\nConventions: ${model.conventions.summary}` }),
      el('div', { className: 'gl-count-row', attrs: { 'aria-label': `${headline.label}: queries where B wins, ties and loses` } },
        el('span', { text: `${headline.label}, per query:` }),
        el('span', { title: COLUMN_EXPLANATIONS['wins'] + ` Tie tolerance ${model.tieTolerance}.` }, el('strong', { id: 'gl-compare-wins', className: 'gl-better', text: String(headline.wins) }), ' B better'),
        el('span', { title: COLUMN_EXPLANATIONS['ties'] + ` Tie tolerance ${model.tieTolerance}.` }, el('strong', { id: 'gl-compare-ties', text: String(headline.ties) }), ' ties'),
        el('span', { title: COLUMN_EXPLANATIONS['losses'] + ` Tie tolerance ${model.tieTolerance}.` }, el('strong', { id: 'gl-compare-losses', className: 'gl-worse', text: String(headline.losses) }), ' B worse')),
    );

    const adjustSelect = select(
      { label: 'p-values', values: [{ value: 'none', text: 'as tested' }, { value: 'holm', text: 'Holm-adjusted' }, { value: 'bh', text: 'Benjamini–Hochberg-adjusted' }], selected: this.adjust },
      (v) => {
        this.adjust = v as Adjust;
        this.table?.setColumns(this.columns());
      },
    );
    adjustSelect.select.setAttribute('aria-label', 'Show p-values as tested or adjusted over the metrics');
    this.table = new VirtualTable<MetricLine>({
      id: 'gl-compare-table',
      label: 'Run A against run B per metric',
      columns: this.columns(),
      source: arraySource(() => this.lines),
      rowHeight: 26,
      dataset: (l) => ({ metric: l.row.key }),
      cellTitle: (c, l) => this.cellTitle(c, l),
      onOpen: (l) => {
        this.chartMetric = l.row.key;
        void this.loadCharts();
      },
    });
    this.table.element.classList.add('auto');
    this.table.element.style.height = `${this.lines.length * 26 + 34 + 14}px`; // 14: room for a sideways scrollbar
    this.element.append(
      el('h2', { text: 'Per metric' }),
      el('div', { className: 'gl-toolbar' }, adjustSelect.wrapper, el('span', { className: 'gl-spacer' }),
        el('span', { className: 'gl-muted', text: 'Enter or click a metric to chart it below.' }),
        button('Markdown', { icon: 'markdown', secondary: true, onClick: () => this.export('markdown') }),
        button('CSV', { icon: 'export', secondary: true, onClick: () => this.export('csv') })),
      this.table.element,
    );
    if (model.warnings.length > 0) {
      const list = el('ul', { className: 'gl-warnings' });
      for (const w of model.warnings) list.appendChild(el('li', { text: w }));
      this.element.append(el('h2', { text: 'Notes' }), list);
    }
    this.element.append(el('div', { id: 'gl-compare-charts' }));
    void this.loadCharts();
  }

  private computeLines(model: CompareOverviewModel): void {
    const names: string[] = [];
    for (const m of model.metrics) for (const t of m.tests) if (!names.includes(t.test)) names.push(t.test);
    this.testNames = names;
    const bhByTest = new Map<string, (number | null)[]>();
    for (const name of names) bhByTest.set(name, benjaminiHochberg(model.metrics.map((m) => m.tests.find((t) => t.test === name)?.pValue ?? null)));
    this.lines = model.metrics.map((row, mi) => {
      const p: Record<string, { raw: number | null; holm: number | null; bh: number | null; statistic: number | null }> = {};
      for (const name of names) {
        const t = row.tests.find((x) => x.test === name);
        p[name] = { raw: t?.pValue ?? null, holm: t?.adjustedP ?? null, bh: bhByTest.get(name)![mi] ?? null, statistic: t?.statistic ?? null };
      }
      const tTest = row.tests.find((t) => /t-test|student/i.test(t.test));
      return { row, p, dz: effectSizeDz(tTest?.statistic ?? null, row.wins + row.ties + row.losses) };
    });
  }

  private columns(): ColumnDef<MetricLine>[] {
    const f = (v: Cell) => (typeof v === 'number' ? formatFixed(v) : MISSING);
    const cols: ColumnDef<MetricLine>[] = [
      { key: 'metric', label: 'Metric', title: 'Metric, as configured.', value: (l) => l.row.label, width: 1.1, sticky: true },
      { key: 'meanA', label: 'Mean A', title: 'Mean over the paired queries in run A.', value: (l) => l.row.meanA, format: f, numeric: true, width: 0.9, sample: SAMPLES.unitFixed },
      { key: 'meanB', label: 'Mean B', title: 'Mean over the paired queries in run B.', value: (l) => l.row.meanB, format: f, numeric: true, width: 0.9, sample: SAMPLES.unitFixed },
      { key: 'delta', label: 'Δ (B − A)', title: 'Mean B − mean A (mean of the per-query differences).', value: (l) => l.row.delta, format: (v) => (typeof v === 'number' ? formatDelta(v) : MISSING), numeric: true, sample: SAMPLES.unitDelta },
      {
        key: 'interval',
        label: '95% interval',
        title: '95% confidence interval of the mean difference, as computed by the host.',
        value: (l) => (l.row.intervalLow === null || l.row.intervalHigh === null ? null : `[${formatDelta(l.row.intervalLow, 3)}, ${formatDelta(l.row.intervalHigh, 3)}]`),
        width: 1.7,
        numeric: true,
        sample: '[-0.000, -0.000]',
      },
      { key: 'dz', label: 'd_z', title: 'Paired effect size: mean Δ / standard deviation of Δ, derived as t / √n (Lakens 2013).', value: (l) => l.dz, format: (v) => (typeof v === 'number' ? formatFixed(v, 3) : MISSING), numeric: true, width: 0.7, sample: '-0.000' },
      { key: 'wtl', label: 'W / T / L', title: 'Queries where B wins / ties / loses (|Δ| within the tie tolerance is a tie).', value: (l) => `${l.row.wins} / ${l.row.ties} / ${l.row.losses}`, numeric: true, width: 1.3, sample: '9999 / 9999 / 9999' },
    ];
    const which = this.adjust;
    for (const name of this.testNames) {
      cols.push({
        key: `p:${name}`,
        label: `p(${shortTestName(name)})${which === 'holm' ? ' Holm' : which === 'bh' ? ' BH' : ''}`,
        title: `${name}: two-sided p-value${which === 'holm' ? ', Holm-adjusted over the metrics (Holm 1979)' : which === 'bh' ? ', Benjamini–Hochberg-adjusted over the metrics (Benjamini & Hochberg 1995)' : ' as tested'}.`,
        value: (l) => {
          const p = l.p[name];
          return p ? (which === 'holm' ? p.holm : which === 'bh' ? p.bh : p.raw) : null;
        },
        format: (v) => (typeof v === 'number' ? formatP(v) : MISSING),
        numeric: true,
        width: 1.1,
        sample: SAMPLES.p,
      });
    }
    return cols;
  }

  private cellTitle(c: ColumnDef<MetricLine>, l: MetricLine): string {
    if (c.key === 'metric') return explainMetric(l.row.key, this.model?.conventions.summary ?? '');
    if (c.key.startsWith('p:')) {
      const name = c.key.slice(2);
      const p = l.p[name];
      if (!p) return name;
      return `${name}\nstatistic ${p.statistic === null ? MISSING : exactValue(p.statistic)}\np ${p.raw === null ? MISSING : exactValue(p.raw)}\nHolm ${p.holm === null ? MISSING : exactValue(p.holm)}\nBH ${p.bh === null ? MISSING : exactValue(p.bh)}`;
    }
    const v = c.value(l);
    return typeof v === 'number' ? `${exactValue(v)}\n${c.title}` : `${v ?? MISSING}\n${c.title}`;
  }

  private async loadCharts(): Promise<void> {
    const host = this.element.querySelector<HTMLElement>('#gl-compare-charts');
    const model = this.model;
    if (!host || !model) return;
    const token = ++this.token;
    const metric = model.metrics.find((m) => m.key === this.chartMetric) ?? model.metrics[model.headline]!;
    clear(host);
    host.append(el('p', { className: 'gl-muted', text: `Loading per-query ${metric.label}…` }));
    const rows: CompareRow[] = [];
    try {
      for (let offset = 0; offset < MAX_POINTS; offset += CHUNK) {
        const page = await this.ctx.request('comparePage', { metric: metric.key, sort: { key: 'delta', descending: false }, offset, limit: CHUNK });
        if (token !== this.token) return;
        rows.push(...page.rows);
        if (offset + CHUNK >= page.total) break;
      }
    } catch (e) {
      if (token === this.token) {
        clear(host);
        host.append(el('p', { className: 'gl-worse', text: `Could not load per-query values: ${(e as Error).message}` }));
      }
      return;
    }
    for (const c of this.charts) c.destroy();
    this.charts = [];
    clear(host);
    const points = rows.filter((r) => r.a !== null && r.b !== null).map((r) => ({ x: r.a!, y: r.b!, query: r.query }));
    const deltas = rows.map((r) => (r.delta === null ? NaN : r.delta));
    const scatterCanvas = el('canvas', { attrs: { role: 'img', 'aria-label': `Scatter of ${metric.label} per query, A on x, B on y, ${points.length} queries; points above the diagonal improved in B` } });
    const histCanvas = el('canvas', { attrs: { role: 'img', 'aria-label': `Histogram of per-query differences B − A of ${metric.label}` } });
    host.append(
      el('div', { className: 'gl-grid2' },
        el('section', {}, el('h2', { text: `${metric.label}: A against B per query` }), el('div', { className: 'gl-chart tall' }, scatterCanvas),
          el('p', { className: 'gl-muted', text: 'Green, above the diagonal: B better; red, below: B worse; grey: no change. Click a point to see that query’s movement.' })),
        el('section', {}, el('h2', { text: `Per-query difference B − A` }), el('div', { className: 'gl-chart tall' }, histCanvas),
          el('p', { className: 'gl-muted', text: `Queries per equal-width bin of B − A over a range symmetric about 0; ${formatCount(deltas.filter((d) => Number.isNaN(d)).length)} queries without a value in both runs are left out.` }))),
    );
    this.charts.push(scatterChart(scatterCanvas, { points, xTitle: `${metric.label} in A`, yTitle: `${metric.label} in B`, onPick: (q) => this.ctx.openQuery(q, 'movement') }));
    const finite = deltas.filter((d) => !Number.isNaN(d));
    const h = binValues(deltas, { bins: suggestedBins(finite.length) | 1, range: symmetricRange(deltas) });
    const labels: string[] = [];
    const tips: string[] = [];
    const roles: ('better' | 'worse' | 'neutral')[] = [];
    for (let i = 0; i < h.counts.length; i++) {
      const label = binLabel(h, i, (x) => formatFixed(x, 3));
      labels.push(label);
      tips.push(`${formatCount(h.counts[i]!)} queries with B − A in ${label}`);
      const mid = (h.edges[i]! + h.edges[i + 1]!) / 2;
      roles.push(h.edges[i + 1]! <= 0 && mid < 0 ? 'worse' : h.edges[i]! >= 0 ? 'better' : 'neutral');
    }
    this.charts.push(barChart(histCanvas, { labels, counts: Array.from(h.counts), tooltips: tips, roles, xTitle: `B − A (${metric.label})`, yTitle: 'queries', seriesLabel: 'queries' }));
  }

  private export(format: 'markdown' | 'csv'): void {
    if (!this.model) return;
    const cols = this.columns();
    this.ctx.exportTable(exportParams(`${this.model.runA.name} vs ${this.model.runB.name}`, cols, this.lines, format, 'file'));
  }
}

function shortTestName(name: string): string {
  if (/wilcoxon/i.test(name)) return 'W';
  if (/random|permutation/i.test(name)) return 'rand';
  if (/t-test|student/i.test(name)) return 't';
  return name;
}
