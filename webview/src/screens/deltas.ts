/**
 * Per-query differences between the two runs in a virtual grid, biggest regressions first by
 * default; filter by id, outcome and segment; Enter or a click opens the query's movement.
 */
import type { CompareOverviewModel, CompareRow, ComparePageParams, Outcome } from '../../../extension/protocol/messages';
import { COLUMN_EXPLANATIONS } from '../model/explain';
import { exactValue, formatDelta, formatFixed, MISSING, formatCount } from '../model/format';
import { PageCache } from '../model/pageCache';
import { normalizeFilter, toggleSort, type SortState } from '../model/sortState';
import { SAMPLES } from '../model/columnLayout';
import { exportParams, type Cell, type ColumnDef } from '../model/tableModel';
import type { AppContext } from '../ui/context';
import { button, el, fillSelect, select } from '../ui/dom';
import { pagedSource, VirtualTable } from '../ui/virtualTable';

const PAGE = 100;
const EXPORT_LIMIT = 10_000;
const fixed = (v: Cell): string => (typeof v === 'number' ? formatFixed(v) : MISSING);

export class DeltasScreen {
  readonly element = el('div', { className: 'gl-panel-body fill-body' });
  private model: CompareOverviewModel | undefined;
  private sort: SortState = { key: 'delta', descending: false };
  private filter: string | undefined;
  private outcome: Outcome | undefined;
  private metric = '';
  private readonly cache: PageCache<CompareRow>;
  private readonly table: VirtualTable<CompareRow>;
  private readonly metricSelect: HTMLSelectElement;
  private readonly summary = el('span', { className: 'gl-muted', attrs: { 'aria-live': 'polite' } });
  private timer: ReturnType<typeof setTimeout> | undefined;

  constructor(private readonly ctx: AppContext) {
    this.cache = new PageCache<CompareRow>((offset, limit) => this.ctx.request('comparePage', this.params(offset, limit)), PAGE, () => this.onRows());
    this.table = new VirtualTable<CompareRow>({
      id: 'gl-deltas-table',
      label: 'Per-query differences, biggest regressions first',
      columns: this.columns(),
      source: pagedSource(this.cache),
      dataset: (r) => ({ query: r.query }),
      sort: () => this.sort,
      onSort: (key) => {
        this.sort = toggleSort(this.sort, key);
        this.reload();
      },
      onOpen: (r) => this.ctx.openQuery(r.query, 'movement'),
      emptyText: 'No query matches the filters.',
      cellTitle: (c, r) => {
        const v = c.value(r);
        return typeof v === 'number' && c.key !== 'rank' ? `${exactValue(v)}\n${c.title}` : String(v ?? MISSING);
      },
    });
    const input = el('input', { id: 'gl-deltas-filter', className: 'gl-input', attrs: { type: 'search', placeholder: 'Filter by query id…', 'aria-label': 'Filter queries by id', spellcheck: 'false' } });
    input.addEventListener('input', () => {
      clearTimeout(this.timer);
      this.timer = setTimeout(() => {
        const f = normalizeFilter(input.value);
        if (f !== this.filter) {
          this.filter = f;
          this.reload();
        }
      }, 150);
    });
    const outcome = select(
      { label: 'Outcome', values: [{ value: '', text: 'all' }, { value: 'loss', text: 'B worse' }, { value: 'tie', text: 'tie' }, { value: 'win', text: 'B better' }] },
      (v) => {
        this.outcome = v === '' ? undefined : (v as Outcome);
        this.reload();
      },
    );
    outcome.select.setAttribute('aria-label', 'Show only queries with this outcome');
    const metric = select({ label: 'Metric', values: [] }, (v) => {
      this.metric = v;
      this.table.setColumns(this.columns());
      this.reload();
    });
    this.metricSelect = metric.select;
    this.metricSelect.setAttribute('aria-label', 'Metric compared');
    this.element.append(
      el('div', { className: 'gl-toolbar' }, input, metric.wrapper, outcome.wrapper, el('span', { className: 'gl-spacer' }), this.summary,
        button('Markdown', { icon: 'markdown', secondary: true, title: 'Export in this order (up to 10 000 rows)', onClick: () => void this.export('markdown') }),
        button('CSV', { icon: 'export', secondary: true, title: 'Export in this order (up to 10 000 rows)', onClick: () => void this.export('csv') })),
      this.table.element,
    );
  }

  setModel(model: CompareOverviewModel, keep: boolean): void {
    this.model = model;
    if (!keep || !model.metrics.some((m) => m.key === this.metric)) this.metric = model.metrics[model.headline]?.key ?? '';
    if (!keep) this.sort = { key: 'delta', descending: false };
    fillSelect(this.metricSelect, model.metrics.map((m) => ({ value: m.key, text: m.label })), this.metric);
    this.table.setColumns(this.columns());
    this.cache.reset();
    this.table.refresh(!keep);
  }

  private label(): string {
    return this.model?.metrics.find((m) => m.key === this.metric)?.label ?? this.metric;
  }

  private columns(): ColumnDef<CompareRow>[] {
    const label = this.label();
    return [
      { key: 'rank', label: '#', title: 'Position in the current order.', value: (r) => r.index + 1, numeric: true, width: 0, sample: SAMPLES.rank, sticky: true },
      { key: 'query', label: 'Query', title: 'Query id.', value: (r) => r.query, sortable: true, width: 3, sticky: true },
      { key: 'a', label: `${label} A`, title: COLUMN_EXPLANATIONS['a']!, value: (r) => r.a, format: fixed, numeric: true, sortable: true, sample: SAMPLES.unitFixed },
      { key: 'b', label: `${label} B`, title: COLUMN_EXPLANATIONS['b']!, value: (r) => r.b, format: fixed, numeric: true, sortable: true, sample: SAMPLES.unitFixed },
      { key: 'delta', label: 'Δ (B − A)', title: COLUMN_EXPLANATIONS['delta']!, value: (r) => r.delta, format: (v) => (typeof v === 'number' ? formatDelta(v) : MISSING), numeric: true, sortable: true, sample: SAMPLES.unitDelta, bar: (r) => (r.delta === null ? null : Math.abs(r.delta)) },
      { key: 'outcome', label: 'Outcome', title: 'win: B better beyond the tie tolerance; loss: B worse; tie: within it.', value: (r) => (r.outcome === 'win' ? 'B better' : r.outcome === 'loss' ? 'B worse' : r.outcome === 'tie' ? 'tie' : null) },
    ];
  }

  private params(offset: number, limit: number): ComparePageParams {
    return { sort: this.sort, filter: this.filter, outcome: this.outcome, metric: this.metric || undefined, offset, limit };
  }

  private reload(): void {
    this.cache.reset();
    this.table.refresh(true);
  }

  private onRows(): void {
    const total = this.cache.total;
    this.summary.textContent = total === undefined ? '' : `${formatCount(total)} queries`;
    this.table.refresh();
  }

  private async export(format: 'markdown' | 'csv'): Promise<void> {
    try {
      const page = await this.ctx.request('comparePage', this.params(0, EXPORT_LIMIT));
      this.ctx.exportTable(exportParams(`Per-query ${this.label()} B − A`, this.columns(), page.rows, format, 'file'));
    } catch (e) {
      this.ctx.notify(`Export failed: ${(e as Error).message}`, true);
    }
  }
}
