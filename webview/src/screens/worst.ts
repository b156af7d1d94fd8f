/**
 * Worst queries: every query in a virtual grid, fetched from the host a page at a time in the
 * chosen order (default: headline metric ascending, so the worst query is first). Filter by id
 * substring and by a segment value; Enter or a click opens the query's detail.
 */
import type { OverviewModel, QueryPageParams, QueryRow, SegmentFilter } from '../../../extension/protocol/messages';
import { COLUMN_EXPLANATIONS, explainMetric } from '../model/explain';
import { exactValue, formatCount, formatFixed, formatShare, MISSING } from '../model/format';
import { PageCache } from '../model/pageCache';
import { normalizeFilter, toggleSort, type SortState } from '../model/sortState';
import { SAMPLES } from '../model/columnLayout';
import { exportParams, type Cell, type ColumnDef } from '../model/tableModel';
import type { AppContext } from '../ui/context';
import { ColumnChooser } from '../ui/columnChooser';
import { button, el, fillSelect, select } from '../ui/dom';
import { pagedSource, VirtualTable } from '../ui/virtualTable';

const PAGE = 100;
const EXPORT_LIMIT = 10_000;

const fixed = (v: Cell): string => (typeof v === 'number' ? formatFixed(v) : MISSING);
const count = (v: Cell): string => (typeof v === 'number' ? formatCount(v) : MISSING);

export class WorstScreen {
  readonly element = el('div', { className: 'gl-panel-body fill-body' });
  private model: OverviewModel | undefined;
  private sort: SortState = { key: '', descending: false };
  private filter: string | undefined;
  private segment: SegmentFilter | undefined;
  private readonly cache: PageCache<QueryRow>;
  private readonly table: VirtualTable<QueryRow>;
  private readonly filterInput: HTMLInputElement;
  private readonly segColumn: HTMLSelectElement;
  private readonly segValue: HTMLSelectElement;
  private readonly summary = el('span', { className: 'gl-muted', attrs: { 'aria-live': 'polite' } });
  private filterTimer: ReturnType<typeof setTimeout> | undefined;
  private readonly chooser = new ColumnChooser('gl-worst-columns', () => this.applyColumns());

  constructor(private readonly ctx: AppContext) {
    this.cache = new PageCache<QueryRow>((offset, limit) => this.fetch(offset, limit), PAGE, () => this.onRows());
    this.table = new VirtualTable<QueryRow>({
      id: 'gl-worst-table',
      label: 'Queries, worst first',
      columns: [],
      source: pagedSource(this.cache),
      dataset: (row) => ({ query: row.query }),
      sort: () => this.sort,
      onSort: (key) => this.setSort(toggleSort(this.sort, key)),
      onOpen: (row) => this.ctx.openQuery(row.query, 'detail'),
      emptyText: 'No query matches the filters.',
      cellTitle: (c, row) => this.cellTitle(c, row),
    });
    this.filterInput = el('input', {
      id: 'gl-worst-filter',
      className: 'gl-input',
      attrs: { type: 'search', placeholder: 'Filter by query text…', 'aria-label': 'Filter queries by text (substring, case-insensitive)', spellcheck: 'false' },
    });
    this.filterInput.addEventListener('input', () => {
      clearTimeout(this.filterTimer);
      this.filterTimer = setTimeout(() => this.setFilter(this.filterInput.value), 150);
    });
    this.filterInput.addEventListener('keydown', (e) => {
      if (e.key === 'ArrowDown') {
        e.preventDefault();
        this.table.focus();
      }
    });
    const col = select({ label: 'Segment', values: [] }, () => void this.loadSegmentValues());
    const val = select({ label: 'Value', values: [] }, () => this.applySegment());
    this.segColumn = col.select;
    this.segValue = val.select;
    this.segColumn.setAttribute('aria-label', 'Segment column to filter on');
    this.segValue.setAttribute('aria-label', 'Segment value to keep');
    this.element.append(
      el('div', { className: 'gl-toolbar', attrs: { role: 'toolbar', 'aria-label': 'Worst queries filters' } },
        this.filterInput, col.wrapper, val.wrapper, el('span', { className: 'gl-spacer' }), this.summary, this.chooser.element,
        button('Markdown', { icon: 'markdown', secondary: true, title: 'Export the table in this order (up to 10 000 rows) as Markdown', onClick: () => void this.export('markdown') }),
        button('CSV', { icon: 'export', secondary: true, title: 'Export the table in this order (up to 10 000 rows) as CSV', onClick: () => void this.export('csv') }),
        button('Copy query as JSON', { icon: 'json', secondary: true, title: 'Copy the active query with its items as JSON', onClick: () => this.copyActive() })),
      this.table.element,
    );
  }

  /** New data. `keep` keeps sort, filters and the active row (live refresh). */
  setModel(model: OverviewModel, keep: boolean): void {
    const headlineKey = model.metrics[model.headline]!.key;
    const validKeys = new Set([...model.metrics.map((m) => m.key), 'query', 'items', 'relevant', 'inversions', 'inversionCost']);
    if (!keep || !validKeys.has(this.sort.key)) this.sort = { key: headlineKey, descending: false };
    this.model = model;
    const segmentColumns = model.segmentColumns;
    const current = keep ? this.segColumn.value : '';
    fillSelect(this.segColumn, [{ value: '', text: 'any' }, ...segmentColumns.map((c) => ({ value: c, text: c }))], current);
    this.segColumn.disabled = segmentColumns.length === 0;
    if (!keep) {
      this.filter = undefined;
      this.filterInput.value = '';
      this.segment = undefined;
      fillSelect(this.segValue, []);
      this.segValue.disabled = true;
    }
    this.chooser.setColumns(this.columns(model));
    this.applyColumns();
    this.cache.reset();
    this.table.refresh(!keep);
  }

  private applyColumns(): void {
    if (this.model) this.table.setColumns(this.chooser.shown(this.columns(this.model)));
  }

  focusTable(): void {
    this.table.focus();
  }

  private columns(model: OverviewModel): ColumnDef<QueryRow>[] {
    const conv = model.conventions.summary;
    const cols: ColumnDef<QueryRow>[] = [
      { key: 'rank', label: '#', title: 'Position in the current order.', value: (r) => r.index + 1, numeric: true, width: 0, sample: SAMPLES.rank, sticky: true },
      { key: 'query', label: 'Query', title: COLUMN_EXPLANATIONS['query']!, value: (r) => r.query, sortable: true, width: 3, sticky: true },
    ];
    if (model.queryText) cols.push({ key: 'text', label: 'Text', title: 'Query text from the queries table; the filter matches it too.', value: (r) => r.text ?? '', width: 3 });
    model.metrics.forEach((m, i) =>
      cols.push({ key: m.key, label: m.label, title: explainMetric(m.key, conv), value: (r) => r.values[i] ?? null, format: fixed, numeric: true, sortable: true, sample: SAMPLES.unitFixed }),
    );
    cols.push(
      { key: 'items', label: 'Items', title: COLUMN_EXPLANATIONS['items']!, value: (r) => r.items, format: count, numeric: true, sortable: true, width: 0.7, sample: SAMPLES.count },
      { key: 'relevant', label: 'Relevant', title: COLUMN_EXPLANATIONS['relevant']!, value: (r) => r.relevant, format: count, numeric: true, sortable: true, width: 0.7, sample: SAMPLES.count },
      { key: 'inversions', label: 'Inversions', title: COLUMN_EXPLANATIONS['inversions']!, value: (r) => r.inversions, format: count, numeric: true, sortable: true, width: 0.8, sample: SAMPLES.count },
      { key: 'inversionCost', label: 'Inversion cost', title: COLUMN_EXPLANATIONS['inversionCost']!, value: (r) => r.inversionCost, format: fixed, numeric: true, sortable: true, sample: SAMPLES.unitFixed },
      {
        key: 'lossShare',
        label: 'Share of loss',
        // (1 − NDCG_q) / Σ(1 − NDCG): one scale for every query, so it orders the queries exactly as
        // NDCG does; a sort of its own would only repeat the NDCG sort, so the header does not offer one.
        title: `${COLUMN_EXPLANATIONS['lossShare']!}\nNot sortable on its own: it orders queries exactly as ${model.metrics[model.headline]!.label} does (sort by that).`,
        value: (r) => r.lossShare,
        format: (v) => (typeof v === 'number' ? formatShare(v) : MISSING),
        numeric: true,
        sortable: false,
        sample: SAMPLES.share,
        bar: (r) => (r.lossShare === null ? null : Math.min(1, r.lossShare * 20)),
      },
    );
    return cols;
  }

  private cellTitle(c: ColumnDef<QueryRow>, row: QueryRow): string {
    const v = c.value(row);
    if (row.skipped && c.numeric && v === null) return 'Skipped: no relevant item under the “skip” policy.';
    if (typeof v === 'number' && c.key !== 'rank') return `${c.label} = ${exactValue(v)}\n${c.title}`;
    return typeof v === 'string' ? v : c.label;
  }

  private params(offset: number, limit: number): QueryPageParams {
    return { sort: { key: this.sort.key, descending: this.sort.descending }, filter: this.filter, segment: this.segment, offset, limit };
  }

  private fetch(offset: number, limit: number) {
    return this.ctx.request('queryPage', this.params(offset, limit));
  }

  private onRows(): void {
    const total = this.cache.total;
    const all = this.model?.queryCount ?? 0;
    this.summary.textContent = total === undefined ? '' : total === all ? `${formatCount(total)} queries` : `${formatCount(total)} of ${formatCount(all)} queries`;
    this.table.refresh();
  }

  private setSort(sort: SortState): void {
    this.sort = sort;
    this.cache.reset();
    this.table.refresh(true);
  }

  private setFilter(text: string): void {
    const f = normalizeFilter(text);
    if (f === this.filter) return;
    this.filter = f;
    this.cache.reset();
    this.table.refresh(true);
  }

  private async loadSegmentValues(): Promise<void> {
    const column = this.segColumn.value;
    if (!column) {
      fillSelect(this.segValue, []);
      this.segValue.disabled = true;
      this.applySegment();
      return;
    }
    try {
      const table = await this.ctx.request('segments', { column });
      fillSelect(this.segValue, table.rows.map((r) => ({ value: r.value, text: `${r.value} (${formatCount(r.queries)})` })));
      this.segValue.disabled = false;
      this.applySegment();
    } catch (e) {
      this.ctx.notify(`Could not list values of ${column}: ${(e as Error).message}`, true);
    }
  }

  private applySegment(): void {
    const column = this.segColumn.value;
    this.segment = column && !this.segValue.disabled && this.segValue.value !== '' ? { column, value: this.segValue.value } : undefined;
    this.cache.reset();
    this.table.refresh(true);
  }

  private async export(format: 'markdown' | 'csv'): Promise<void> {
    if (!this.model) return;
    try {
      const page = await this.ctx.request('queryPage', this.params(0, EXPORT_LIMIT));
      const cols = this.columns(this.model);
      const title = `Queries by ${this.sort.key} ${this.sort.descending ? 'descending' : 'ascending'}${this.filter ? `, filter "${this.filter}"` : ''}${this.segment ? `, ${this.segment.column} = ${this.segment.value}` : ''}`;
      this.ctx.exportTable(exportParams(title, cols, page.rows, format, 'file'));
    } catch (e) {
      this.ctx.notify(`Export failed: ${(e as Error).message}`, true);
    }
  }

  private copyActive(): void {
    const row = this.table.activeRow();
    const query = row?.query ?? this.ctx.selectedQuery();
    if (query) this.ctx.copyQuery(query);
    else this.ctx.notify('Select a query first.');
  }
}
