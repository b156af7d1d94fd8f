/**
 * A virtualised grid: the scroll area is as tall as the whole table but only the rows in view
 * exist in the DOM. Rows come from a `RowSource` (paged from the host, or a local array). Follows
 * the WAI-ARIA grid pattern: one tab stop, arrows / Page Up/Down / Home / End move the active row,
 * Enter opens it; `aria-rowcount` and `aria-rowindex` tell screen readers where they are.
 * Columns never squeeze numbers (columnLayout.ts): when they do not fit, the one scroll area scrolls
 * sideways too, carrying the header (sticky at the top) and leaving sticky leading columns in place.
 */
import { ColumnWidths, type GridTemplate } from '../model/columnLayout';
import { navigate } from '../model/gridKeys';
import { ariaSort, type SortState } from '../model/sortState';
import { cellText, type ColumnDef } from '../model/tableModel';
import { computeWindow, pagesCovering, scrollTopToReveal } from '../model/virtualWindow';
import { clear, el } from './dom';

export interface RowSource<Row> {
  /** Undefined while the first page is on its way. */
  total(): number | undefined;
  row(index: number): Row | undefined;
  /** Ask for rows [first, end) (fetching pages as needed). */
  ensure(first: number, end: number): void;
  error?(): string | undefined;
}

export interface VirtualTableOptions<Row> {
  readonly id: string;
  readonly label: string;
  readonly columns: readonly ColumnDef<Row>[];
  readonly source: RowSource<Row>;
  readonly rowHeight?: number;
  readonly dataset?: (row: Row) => Record<string, string>;
  readonly cellTitle?: (column: ColumnDef<Row>, row: Row) => string | undefined;
  readonly sort?: () => SortState | undefined;
  readonly onSort?: (key: string) => void;
  readonly onOpen?: (row: Row, index: number) => void;
  readonly emptyText?: string;
}

const HORIZONTAL_STEP_PX = 60;

export class VirtualTable<Row> {
  readonly element: HTMLElement;
  private readonly viewport: HTMLElement;
  private readonly spacer: HTMLElement;
  private readonly rowsBox: HTMLElement;
  private readonly header: HTMLElement;
  private readonly headGroup: HTMLElement;
  private readonly status: HTMLElement;
  private readonly rowHeight: number;
  private active = -1;
  private frame = 0;
  private columns: readonly ColumnDef<Row>[];
  private widths: ColumnWidths;
  private layout: GridTemplate;

  constructor(private readonly options: VirtualTableOptions<Row>) {
    this.rowHeight = options.rowHeight ?? 24;
    this.columns = options.columns;
    this.widths = new ColumnWidths(this.columns);
    this.layout = this.widths.template();
    this.header = el('div', { className: 'gl-vt-head', attrs: { role: 'row', 'aria-rowindex': 1 } });
    this.headGroup = el('div', { className: 'gl-vt-headgroup', attrs: { role: 'rowgroup' } }, this.header);
    this.rowsBox = el('div', { className: 'gl-vt-rows', attrs: { role: 'rowgroup' } });
    this.spacer = el('div', { className: 'gl-vt-spacer' }, this.rowsBox);
    this.viewport = el('div', { className: 'gl-vt-viewport' }, this.headGroup, this.spacer);
    this.status = el('div', { className: 'gl-vt-status', attrs: { role: 'status', 'aria-live': 'polite' } });
    this.element = el(
      'div',
      { id: options.id, className: 'gl-vt', attrs: { role: 'grid', 'aria-label': options.label, tabindex: 0 } },
      this.viewport,
      this.status,
    );
    this.viewport.addEventListener('scroll', () => this.schedule(), { passive: true });
    this.element.addEventListener('keydown', (e) => this.onKey(e));
    this.rowsBox.addEventListener('click', (e) => this.onClick(e));
    new ResizeObserver(() => this.schedule()).observe(this.viewport);
    this.renderHeader();
  }

  setColumns(columns: readonly ColumnDef<Row>[]): void {
    this.columns = columns;
    this.widths = new ColumnWidths(columns);
    this.renderHeader();
    this.schedule();
  }

  /** The data changed (new sort/filter/data): keep the active index unless told otherwise. */
  refresh(resetActive = false): void {
    if (resetActive) {
      this.active = -1;
      this.viewport.scrollTop = 0;
    }
    this.renderHeader();
    this.schedule();
  }

  get activeIndex(): number {
    return this.active;
  }

  activeRow(): Row | undefined {
    return this.active >= 0 ? this.options.source.row(this.active) : undefined;
  }

  /** Makes a row active (highlighted, announced) and scrolls it into view. */
  setActive(index: number, reveal = true): void {
    this.active = index;
    if (reveal) this.reveal(index);
    this.schedule();
  }

  focus(): void {
    this.element.focus();
  }

  private renderHeader(): void {
    clear(this.header);
    const sort = this.options.sort?.();
    this.applyLayout();
    this.element.setAttribute('aria-colcount', String(this.columns.length));
    this.columns.forEach((c, i) => {
      const cell = el('div', {
        className: `gl-vt-hcell${c.numeric ? ' num' : ''}`,
        attrs: { role: 'columnheader', 'aria-colindex': i + 1, 'aria-sort': sort && c.sortable ? ariaSort(sort, c.key) : undefined },
      });
      this.stick(cell, i);
      if (c.sortable && this.options.onSort) {
        const state = sort ? ariaSort(sort, c.key) : 'none';
        const arrow = state === 'ascending' ? ' ▲' : state === 'descending' ? ' ▼' : '';
        const b = el('button', {
          className: 'gl-vt-sort',
          text: c.label + arrow,
          title: `${c.title}\nClick to sort by ${c.label}.`,
          attrs: { type: 'button', tabindex: -1 },
        });
        b.addEventListener('click', () => this.options.onSort!(c.key));
        cell.appendChild(b);
      } else {
        cell.textContent = c.label;
        cell.title = c.title;
      }
      this.header.appendChild(cell);
    });
  }

  private applyLayout(): void {
    this.layout = this.widths.template();
    this.element.style.setProperty('--gl-vt-cols', this.layout.columns);
    this.element.style.setProperty('--gl-vt-min', this.layout.minWidth);
  }

  private stick(cell: HTMLElement, column: number): void {
    const left = this.layout.stickyLeft[column];
    if (left === undefined) return;
    cell.classList.add('sticky');
    if (this.layout.stickyLeft[column + 1] === undefined) cell.classList.add('sticky-edge');
    cell.style.left = left;
  }

  /** Rows sit under the sticky header inside the same scroll area: the part they can show. */
  private rowsHeight(): number {
    return Math.max(this.rowHeight, (this.viewport.clientHeight || 400) - this.headGroup.offsetHeight);
  }

  private schedule(): void {
    if (this.frame) return;
    this.frame = requestAnimationFrame(() => {
      this.frame = 0;
      this.render();
    });
  }

  private render(): void {
    const source = this.options.source;
    const total = source.total();
    const viewportHeight = this.rowsHeight();
    if (total === undefined) {
      // Ask for the first rows; the height is unknown until they arrive.
      source.ensure(0, Math.ceil(viewportHeight / this.rowHeight) + 1);
      this.status.textContent = source.error?.() ?? 'Loading rows…';
      return;
    }
    this.element.setAttribute('aria-rowcount', String(total + 1));
    const w = computeWindow({ scrollTop: this.viewport.scrollTop, viewportHeight, rowHeight: this.rowHeight, total });
    this.spacer.style.height = `${w.contentHeight}px`;
    this.rowsBox.style.transform = `translateY(${w.offsetTop}px)`;
    source.ensure(w.first, w.end);
    clear(this.rowsBox);
    let grew = false;
    for (let i = w.first; i < w.end; i++) {
      const row = source.row(i);
      if (row) this.columns.forEach((c, ci) => (grew = this.widths.observe(ci, cellText(c, row)) || grew));
    }
    if (grew) this.renderHeader(); // a wider value than the template: widen before drawing the rows
    for (let i = w.first; i < w.end; i++) this.rowsBox.appendChild(this.renderRow(i, source.row(i)));
    const error = source.error?.();
    this.status.textContent = error ? `Could not load rows: ${error}` : total === 0 ? (this.options.emptyText ?? 'No rows.') : '';
    this.status.classList.toggle('error', Boolean(error));
    if (this.active >= 0 && this.active < total) this.element.setAttribute('aria-activedescendant', this.rowId(this.active));
    else this.element.removeAttribute('aria-activedescendant');
  }

  private rowId(index: number): string {
    return `${this.options.id}-r${index}`;
  }

  private renderRow(index: number, row: Row | undefined): HTMLElement {
    const r = el('div', {
      id: this.rowId(index),
      className: `gl-vt-row${index === this.active ? ' active' : ''}${index % 2 ? ' odd' : ''}`,
      attrs: { role: 'row', 'aria-rowindex': index + 2, 'aria-selected': index === this.active ? 'true' : 'false' },
    });
    r.dataset['index'] = String(index);
    r.style.height = `${this.rowHeight}px`;
    if (!row) {
      r.appendChild(el('div', { className: 'gl-vt-cell pending', text: '…', attrs: { role: 'gridcell' } }));
      return r;
    }
    if (this.options.dataset) for (const [k, v] of Object.entries(this.options.dataset(row))) r.dataset[k] = v;
    this.columns.forEach((c, i) => {
      const text = cellText(c, row);
      const cell = el('div', {
        className: `gl-vt-cell${c.numeric ? ' num' : ''}`,
        title: this.options.cellTitle?.(c, row) ?? text,
        attrs: { role: 'gridcell', 'aria-colindex': i + 1 },
      });
      this.stick(cell, i);
      const fraction = c.bar?.(row);
      if (fraction !== undefined && fraction !== null) {
        const track = el('span', { className: 'gl-cellbar', attrs: { 'aria-hidden': 'true' } });
        track.style.width = `${Math.max(0, Math.min(1, fraction)) * 100}%`;
        cell.appendChild(track);
      }
      cell.appendChild(el('span', { className: 'gl-vt-text', text }));
      r.appendChild(cell);
    });
    return r;
  }

  private reveal(index: number): void {
    const total = this.options.source.total() ?? 0;
    const vh = this.rowsHeight();
    const top = scrollTopToReveal(index, this.viewport.scrollTop, vh, this.rowHeight, total);
    if (top !== this.viewport.scrollTop) this.viewport.scrollTop = top;
  }

  private onKey(e: KeyboardEvent): void {
    const total = this.options.source.total() ?? 0;
    if ((e.key === 'ArrowLeft' || e.key === 'ArrowRight') && !e.ctrlKey && !e.metaKey && !e.altKey) {
      // Rows are the unit of navigation; left/right scroll the columns into view.
      e.preventDefault();
      this.viewport.scrollLeft += (e.key === 'ArrowLeft' ? -1 : 1) * HORIZONTAL_STEP_PX;
      return;
    }
    const pageRows = this.rowsHeight() / this.rowHeight;
    const result = navigate({ active: this.active, total, pageRows }, { key: e.key, ctrlKey: e.ctrlKey, metaKey: e.metaKey });
    if (!result.handled) return;
    e.preventDefault();
    if (result.active !== this.active) this.setActive(result.active);
    if (result.open) this.open(result.active);
  }

  private onClick(e: MouseEvent): void {
    const rowEl = (e.target as HTMLElement).closest<HTMLElement>('.gl-vt-row');
    if (!rowEl) return;
    const index = Number(rowEl.dataset['index']);
    this.setActive(index, false);
    this.element.focus({ preventScroll: true });
    this.open(index);
  }

  private open(index: number): void {
    const row = this.options.source.row(index);
    if (row && this.options.onOpen) this.options.onOpen(row, index);
  }
}

/** A row source over a fully loaded array (small tables: segments, compare metrics). */
export function arraySource<Row>(rows: () => readonly Row[]): RowSource<Row> {
  return { total: () => rows().length, row: (i) => rows()[i], ensure: () => undefined };
}

/** A row source over a paged cache. */
export function pagedSource<Row>(cache: {
  total: number | undefined;
  error: string | undefined;
  pageSize: number;
  row(i: number): Row | undefined;
  ensure(pages: readonly number[]): number;
}): RowSource<Row> {
  return {
    total: () => cache.total,
    row: (i) => cache.row(i),
    ensure: (first, end) => void cache.ensure(pagesCovering(first, end, cache.pageSize)),
    error: () => cache.error,
  };
}
