/**
 * One query: the predicted order beside the ideal order with a line joining each item's two
 * positions, each position's gain / discount / contribution, cumulative DCG against the ideal, and
 * the inverted pairs ranked by the NDCG a swap would recover.
 */
import type { Chart } from 'chart.js';
import type { PositionView, QueryDetailView, RunSide } from '../../../extension/protocol/messages';
import { exportParams, type ColumnDef } from '../model/tableModel';
import { COLUMN_EXPLANATIONS, explainMetric, metricLabel } from '../model/explain';
import { exactValue, formatCount, formatFixed } from '../model/format';
import { twoLineChart } from '../ui/charts';
import { scoresByGradeSection } from './scoreDiagnostics';
import type { AppContext } from '../ui/context';
import { button, clear, el } from '../ui/dom';
import { highlightItem, renderConnector, renderOrderList, type ConnectorLink } from '../ui/orderLists';
import { staticTable } from '../ui/staticTable';

// Enough for nearly every real query; longer lists grow on request so a switch stays fast.
const SHOW_STEP = 200;
const num = (v: number | null): number => (v === null ? NaN : v);
const f4 = (v: number | null): string => formatFixed(num(v), 4);
const grade = (v: number | null): string => (v === null ? 'unjudged' : String(v));

export interface DetailOptions {
  readonly metricKeys: () => readonly string[];
  readonly conventionsSummary: () => string;
  readonly compareMode: () => boolean;
}

export class DetailScreen {
  readonly element = el('div', { id: 'gl-detail' });
  private detail: QueryDetailView | undefined;
  private shown = SHOW_STEP;
  private selectedItem: string | null = null;
  private chart: Chart | undefined;
  private run: RunSide = 'a';
  private loadingQuery: string | null = null;
  private token = 0;
  private readonly chartCanvas = el('canvas', { attrs: { role: 'img' } });
  // Sections are kept across queries; the chart's section is never detached (re-attaching a chart
  // canvas makes chart.js rebuild it, which is what made switching slow).
  private readonly headBox = el('div');
  private readonly ordersBox = el('div');
  private readonly chartNote = el('p', { className: 'gl-muted' });
  private readonly chartSection = el('section', {}, el('h2', { text: 'Cumulative DCG: model against ideal' }), this.chartNote, el('div', { className: 'gl-chart' }, this.chartCanvas));
  private readonly pairsBox = el('div');
  private readonly scoresBox = el('div');
  private readonly emptyNote = el('p', { className: 'gl-muted', text: 'Pick a query (Enter or click on its row) to see its ranked list here.' });

  constructor(private readonly ctx: AppContext, private readonly options: DetailOptions) {
    this.element.append(this.emptyNote, this.headBox, this.ordersBox, this.chartSection, this.scoresBox, this.pairsBox);
    this.renderEmpty();
  }

  get query(): string | null {
    return this.detail?.query ?? this.loadingQuery;
  }

  /** Fetch and show a query. Resolves when rendered; stale answers (user clicked on) are dropped. */
  async show(query: string, run: RunSide = this.run): Promise<void> {
    const token = ++this.token;
    this.loadingQuery = query;
    this.run = run;
    const started = performance.now();
    this.element.setAttribute('aria-busy', 'true');
    try {
      const detail = await this.ctx.request('queryDetail', { query, run, maxPairs: 200 });
      if (token !== this.token) return;
      if (this.detail?.query !== detail.query) {
        this.shown = SHOW_STEP;
        this.selectedItem = null;
      }
      this.detail = detail;
      this.render();
      // Exposed for the end-to-end and benchmark runs: request + render time of the last switch.
      this.element.dataset['renderMs'] = String(Math.round(performance.now() - started));
    } catch (e) {
      if (token !== this.token) return;
      this.detail = undefined;
      this.renderEmpty();
      this.emptyNote.hidden = true;
      this.headBox.append(
        el('div', { id: 'gl-detail-query', text: query }),
        el('p', { className: 'gl-worse', attrs: { role: 'alert' }, text: `Could not load this query: ${(e as Error).message}` }),
      );
    } finally {
      if (token === this.token) this.element.removeAttribute('aria-busy');
    }
  }

  clear(): void {
    this.token++;
    this.detail = undefined;
    this.loadingQuery = null;
    this.renderEmpty();
  }

  private renderEmpty(): void {
    for (const box of [this.headBox, this.ordersBox, this.scoresBox, this.pairsBox]) clear(box);
    this.emptyNote.hidden = false;
    this.chartSection.hidden = true;
  }

  private render(): void {
    const d = this.detail!;
    for (const box of [this.headBox, this.ordersBox, this.scoresBox, this.pairsBox]) clear(box);
    if (d.scoresByGrade) this.scoresBox.appendChild(scoresByGradeSection(d.scoresByGrade, 'gl-detail-scores-by-grade'));
    this.emptyNote.hidden = true;
    this.chartSection.hidden = false;
    const conv = this.options.conventionsSummary();
    const keys = this.options.metricKeys();

    const chips = el('div', { className: 'gl-cards' });
    d.values.forEach((v, i) => {
      const key = keys[i] ?? `metric ${i + 1}`;
      chips.appendChild(el('span', { className: 'gl-chip', text: `${metricLabel(key)} ${f4(v)}`, title: `${explainMetric(key, conv)}\nExact: ${exactValue(num(v))}` }));
    });
    for (const [column, value] of Object.entries(d.segments)) chips.appendChild(el('span', { className: 'gl-chip', text: `${column}: ${value}`, title: `Value of column ${column} for this query` }));

    const actions = el('div', { className: 'gl-toolbar' });
    if (this.options.compareMode()) {
      for (const side of ['a', 'b'] as const) {
        actions.appendChild(
          button(`Run ${side.toUpperCase()}`, { secondary: side !== this.run, title: `Show this query as ranked by run ${side.toUpperCase()}`, onClick: () => void this.show(d.query, side) }),
        );
      }
    }
    actions.append(
      button('Reveal in File', { id: 'gl-reveal-in-file', icon: 'go-to-file', title: 'Open the dump at the selected item’s row (the first item when none is selected)', onClick: () => void this.reveal() }),
      button('Copy as JSON', { icon: 'json', secondary: true, title: 'Copy this query with its items, labels, scores and metric values as JSON', onClick: () => this.ctx.copyQuery(d.query, this.run) }),
      button('Markdown', { icon: 'markdown', secondary: true, title: 'Export this query’s ranked list as Markdown', onClick: () => this.export('markdown') }),
      button('CSV', { icon: 'export', secondary: true, title: 'Export this query’s ranked list as CSV', onClick: () => this.export('csv') }),
    );

    this.headBox.append(
      el('div', { className: 'gl-detail-head' },
        el('span', { id: 'gl-detail-query', text: d.query, title: 'Query id' }),
        ...(d.text ? [el('span', { id: 'gl-detail-query-text', text: d.text, title: 'Query text (queries table)' })] : []),
        el('span', { className: 'gl-muted', text: `${formatCount(d.positions.length)} items · DCG@${d.k} ${formatFixed(d.dcg)} of ideal ${formatFixed(d.idealDcg)}`, title: `NDCG@${d.k} = DCG / ideal DCG = ${exactValue(d.dcg)} / ${exactValue(d.idealDcg)}` })),
      chips,
      actions,
    );

    this.renderOrders(d);
    this.renderPairs(d);
    // The lists are what the user looks at first; the chart follows on the next frame so a
    // query switch paints at once.
    const token = this.token;
    requestAnimationFrame(() => {
      if (token === this.token && this.detail === d) this.renderCumulative(d);
    });
  }

  private renderOrders(d: QueryDetailView): void {
    const rowsShown = Math.min(this.shown, d.positions.length);
    const hasTitles = d.positions.some((p) => p.title !== undefined);
    let maxContribution = 0;
    for (const p of d.positions) if (p.contribution > maxContribution) maxContribution = p.contribution;
    const predicted = renderOrderList(
      {
        id: 'gl-predicted-order',
        label: 'Predicted order (by score)',
        headers: [
          { text: 'Pos', title: 'Position in the predicted order.', numeric: true },
          { text: 'Item', title: 'Item id.' },
          ...(hasTitles ? [{ text: 'Title', title: 'Item title from the items table.' }] : []),
          { text: 'Label', title: 'Graded relevance from the file.', numeric: true },
          { text: 'Score', title: 'Model score; the list is sorted by it (descending).', numeric: true },
          { text: 'Gain', title: COLUMN_EXPLANATIONS['gain']!, numeric: true },
          { text: 'Disc.', title: COLUMN_EXPLANATIONS['discount']!, numeric: true },
          { text: 'Contribution', title: COLUMN_EXPLANATIONS['contribution']! },
        ],
        rows: d.positions.slice(0, rowsShown).map((p) => ({
          item: p.item,
          className: `${p.withinCutoff ? '' : 'beyond'}${p.position === d.k + 1 ? ' cutoff' : ''}`.trim() || undefined,
          title: `${p.item}\ncumulative DCG ${formatFixed(p.cumulativeDcg)} vs ideal ${formatFixed(p.idealCumulativeDcg)}${p.tieGroupSize > 1 ? `\nscore tied with ${p.tieGroupSize - 1} other item(s)` : ''}${p.line > 0 ? `\nline ${p.line} of the file` : ''}`,
          cells: [
            { text: String(p.position), numeric: true },
            { text: p.item, title: p.item },
            ...(hasTitles ? [{ text: p.title ?? '', title: p.title ?? '' }] : []),
            { text: grade(p.label), numeric: true },
            { text: p.score === null ? 'missing' : formatFixed(p.score), numeric: true, title: p.score === null ? 'Missing score: ranked after every scored item.' : exactValue(p.score) },
            { text: formatFixed(p.gain, 2), numeric: true, title: exactValue(p.gain) },
            { text: formatFixed(p.discount, 3), numeric: true, title: `${exactValue(p.discount)}${p.tieGroupSize > 1 ? ' (average over the tied group)' : ''}` },
            { text: formatFixed(p.contribution), bar: maxContribution > 0 ? p.contribution / maxContribution : 0, title: `${exactValue(p.contribution)} = gain × discount${p.withinCutoff ? '' : ' (beyond the cut-off: 0)'}` },
          ],
        })),
      },
      (item) => this.pick(item),
    );
    const ideal = renderOrderList(
      {
        id: 'gl-ideal-order',
        label: 'Ideal order (by grade; the model’s order within a grade)',
        headers: [
          { text: 'Pos', title: 'Position in the ideal order: grade descending, and within a grade the order the model gave, so items of equal grade never swap places.', numeric: true },
          { text: 'Item', title: 'Item id.' },
          ...(hasTitles ? [{ text: 'Title', title: 'Item title from the items table.' }] : []),
          { text: 'Label', title: 'Graded relevance.', numeric: true },
          { text: 'Gain', title: COLUMN_EXPLANATIONS['gain']!, numeric: true },
          { text: 'Model', title: 'Where the model ranked this item.', numeric: true },
        ],
        rows: d.ideal.slice(0, rowsShown).map((q) => ({
          item: q.item,
          className: [q.position === d.k + 1 ? 'cutoff' : '', q.retrieved ? '' : 'not-retrieved'].join(' ').trim() || undefined,
          cells: [
            { text: String(q.position), numeric: true },
            { text: q.item, title: q.retrieved ? q.item : `${q.item}: judged, but the run never retrieved it` },
            ...(hasTitles ? [{ text: q.title ?? '', title: q.title ?? '' }] : []),
            { text: grade(q.label), numeric: true },
            { text: formatFixed(q.gain, 2), numeric: true, title: exactValue(q.gain) },
            q.retrieved ? { text: String(q.predictedPosition), numeric: true, title: q.predictedPosition === q.position ? 'Same position as ideal.' : `${q.predictedPosition > q.position ? 'ranked' : 'promoted'} ${Math.abs(q.predictedPosition - q.position)} place(s) ${q.predictedPosition > q.position ? 'too low' : 'above its ideal place'}` }
              : { text: 'not retrieved', title: 'Judged for this query but absent from the run: it counts in the ideal ranking only.' },
          ],
        })),
      },
      (item) => this.pick(item),
    );
    // Each line is judged against the gain that belongs at the item's predicted position.
    const links: ConnectorLink[] = d.positions.map((p) => ({ position: p.position, idealPosition: p.idealPosition, gain: p.gain, slotGain: d.ideal[p.position - 1]?.gain ?? 0, item: p.item }));
    const svg = renderConnector(links, rowsShown, 'Lines joining each item’s predicted position to its ideal position');
    const orders = el('div', { className: 'gl-orders' }, predicted, el('div', {}, svg), ideal);

    this.ordersBox.append(
      el('h2', { text: 'Predicted order against the ideal order' }),
      el('div', { className: 'gl-legend' },
        el('span', {}, el('span', { className: 'gl-swatch up' }), 'belongs higher: more gain than its place calls for'),
        el('span', {}, el('span', { className: 'gl-swatch down' }), 'belongs lower: less gain than its place calls for'),
        el('span', {}, el('span', { className: 'gl-swatch same' }), 'in place: the gain its place calls for'),
        el('span', { text: `Stronger lines: larger gain difference. Within a grade the ideal order keeps the model’s order. Dashed: other end beyond the rows shown. Dashed row border: the cut-off @${d.k}.` })),
      orders,
    );
    if (rowsShown < d.positions.length) {
      this.ordersBox.appendChild(
        el('div', { className: 'gl-toolbar' },
          el('span', { className: 'gl-muted', text: `Showing ${formatCount(rowsShown)} of ${formatCount(d.positions.length)} items.` }),
          button(`Show ${formatCount(Math.min(SHOW_STEP, d.positions.length - rowsShown))} more`, { secondary: true, onClick: () => { this.shown += SHOW_STEP; this.render(); } })),
      );
    }
    highlightItem(this.ordersBox, this.selectedItem);
  }

  private renderCumulative(d: QueryDetailView): void {
    // Past the cut-off the curves are flat (contributions are 0), so a few times k shows everything.
    const n = Math.min(d.positions.length, Math.max(d.k * 3, 30));
    const slice = d.positions.slice(0, n);
    this.chartCanvas.setAttribute('aria-label', `Cumulative DCG by position for the first ${n} positions, model order against ideal order`);
    this.chartNote.textContent = `DCG accumulated down the list; positions beyond @${d.k} add nothing. The gap between the two curves is what the model order loses against the ideal order.`;
    const series = {
      x: slice.map((p) => p.position),
      a: slice.map((p) => p.cumulativeDcg),
      b: slice.map((p) => p.idealCumulativeDcg),
    };
    // One chart for the screen's lifetime: creating a chart costs far more than updating its data,
    // and switching queries must feel instant.
    if (this.chart) {
      this.chart.data.labels = series.x.map(String);
      this.chart.data.datasets[0]!.data = series.a;
      this.chart.data.datasets[1]!.data = series.b;
      this.chart.update('none');
      return;
    }
    this.chart = twoLineChart(this.chartCanvas, { ...series, aLabel: 'model order', bLabel: 'ideal order', xTitle: 'position', yTitle: 'cumulative DCG' });
  }

  private renderPairs(d: QueryDetailView): void {
    this.pairsBox.append(
      el('h2', { text: `Inverted pairs (${formatCount(d.invertedPairsTotal)})` }),
      el('p', { className: 'gl-muted', text: `Pairs where the model scored the better-graded item lower, largest NDCG@${d.k} recovered by swapping first${d.invertedPairs.length < d.invertedPairsTotal ? `; the first ${formatCount(d.invertedPairs.length)} are listed` : ''}.` }),
    );
    const max = d.invertedPairs.reduce((m, p) => Math.max(m, p.ndcgRecovered), 0);
    const table = staticTable({
      id: 'gl-inverted-pairs',
      caption: 'Inverted pairs sorted by NDCG recovered by a swap',
      columns: [
        { label: 'Ranked higher', title: 'Item the model placed above (position, grade).' },
        { label: 'Pos', numeric: true },
        { label: 'Label', numeric: true },
        { label: 'Should be higher', title: 'Item with the higher grade that the model placed below.' },
        { label: 'Pos', numeric: true },
        { label: 'Label', numeric: true },
        { label: 'NDCG recovered', numeric: true, title: COLUMN_EXPLANATIONS['ndcgRecovered']! },
      ],
      rows: d.invertedPairs.map((p) => [
        { text: p.aboveItem, title: p.aboveItem },
        String(p.abovePosition),
        grade(p.aboveLabel),
        { text: p.belowItem, title: p.belowItem },
        String(p.belowPosition),
        grade(p.belowLabel),
        { text: formatFixed(p.ndcgRecovered), title: `${exactValue(p.ndcgRecovered)}${max > 0 ? ` (${formatFixed((p.ndcgRecovered / max) * 100, 0)}% of the largest)` : ''}` },
      ]),
    });
    if (d.invertedPairs.length === 0) this.pairsBox.appendChild(el('p', { id: 'gl-inverted-pairs', text: 'No inverted pairs: every better-graded item is scored at least as high.' }));
    else this.pairsBox.appendChild(table);
  }

  private export(format: 'markdown' | 'csv'): void {
    const d = this.detail;
    if (!d) return;
    const columns: ColumnDef<PositionView>[] = [
      { key: 'position', label: 'Position', title: '', value: (p) => p.position },
      { key: 'item', label: 'Item', title: '', value: (p) => p.item },
      ...(d.positions.some((p) => p.title !== undefined) ? [{ key: 'title', label: 'Title', title: '', value: (p: PositionView) => p.title ?? '' }] : []),
      { key: 'label', label: 'Label', title: '', value: (p) => p.label },
      { key: 'score', label: 'Score', title: '', value: (p) => p.score },
      { key: 'gain', label: 'Gain', title: '', value: (p) => p.gain },
      { key: 'discount', label: 'Discount', title: '', value: (p) => p.discount },
      { key: 'contribution', label: 'Contribution', title: '', value: (p) => p.contribution },
      { key: 'cumulativeDcg', label: 'Cumulative DCG', title: '', value: (p) => p.cumulativeDcg },
      { key: 'idealCumulativeDcg', label: 'Ideal cumulative DCG', title: '', value: (p) => p.idealCumulativeDcg },
      { key: 'idealPosition', label: 'Ideal position', title: '', value: (p) => p.idealPosition },
    ];
    this.ctx.exportTable(exportParams(`Query ${d.query}${this.options.compareMode() ? ` (run ${this.run.toUpperCase()})` : ''}`, columns, d.positions, format, 'file'));
  }

  private pick(item: string): void {
    this.selectedItem = this.selectedItem === item ? null : item;
    highlightItem(this.ordersBox, this.selectedItem);
  }

  private async reveal(): Promise<void> {
    const d = this.detail;
    if (!d) return;
    const position = d.positions.find((p) => p.item === this.selectedItem) ?? d.positions[0];
    if (!position) return;
    try {
      const result = await this.ctx.request('revealRow', { row: position.row, run: this.run });
      if (!result.revealed) this.ctx.notify(result.message ?? `Row ${position.row + 1} could not be shown as a line.`);
    } catch (e) {
      this.ctx.notify(`Could not reveal the row: ${(e as Error).message}`, true);
    }
  }
}

