/**
 * Metrics per value of an extra column (locale, device, …), in one run or compared between two.
 * The host computes the table; it is small, so sorting happens here.
 */
import type { CompareSegmentRow, SegmentRow } from '../../../extension/protocol/messages';
import { COLUMN_EXPLANATIONS, explainMetric } from '../model/explain';
import { exactValue, formatCount, formatDelta, formatFixed, formatP, formatShare, MISSING } from '../model/format';
import { sortRows, toggleSort, type SortState } from '../model/sortState';
import { SAMPLES } from '../model/columnLayout';
import { exportParams, type Cell, type ColumnDef } from '../model/tableModel';
import type { AppContext } from '../ui/context';
import { ColumnChooser } from '../ui/columnChooser';
import { button, el, fillSelect, select } from '../ui/dom';
import { arraySource, VirtualTable } from '../ui/virtualTable';

type Row = SegmentRow | CompareSegmentRow;

const fixed = (v: Cell): string => (typeof v === 'number' ? formatFixed(v) : MISSING);
const delta = (v: Cell): string => (typeof v === 'number' ? formatDelta(v) : MISSING);
const count = (v: Cell): string => (typeof v === 'number' ? formatCount(v) : MISSING);
const pValue = (v: Cell): string => (typeof v === 'number' ? formatP(v) : MISSING);
const interval = (r: CompareSegmentRow): string =>
  r.intervalLow === null || r.intervalHigh === null ? MISSING : `${formatDelta(r.intervalLow)} to ${formatDelta(r.intervalHigh)}`;

export interface SegmentsSetup {
  readonly compare: boolean;
  readonly columns: readonly string[];
  readonly metrics: readonly { key: string; label: string }[];
  readonly headline: number;
  readonly conventionsSummary: string;
}

export class SegmentsScreen {
  readonly element = el('div', { id: 'gl-segments', className: 'gl-panel-body fill-body' });
  private rows: readonly Row[] = [];
  private sorted: readonly Row[] = [];
  private sort: SortState = { key: 'value', descending: false };
  private setup: SegmentsSetup | undefined;
  private readonly columnSelect: HTMLSelectElement;
  private readonly metricSelect: HTMLSelectElement;
  private readonly metricField: HTMLElement;
  private readonly table: VirtualTable<Row>;
  private readonly note = el('p', { className: 'gl-muted' });
  private token = 0;
  private readonly chooser = new ColumnChooser('gl-segments-columns', () => this.applyColumns());

  constructor(private readonly ctx: AppContext) {
    const col = select({ id: 'gl-segment-column', label: 'Column', values: [] }, () => void this.load());
    const met = select({ label: 'Metric', values: [] }, () => void this.load());
    this.columnSelect = col.select;
    this.metricSelect = met.select;
    this.metricField = met.wrapper;
    this.columnSelect.setAttribute('aria-label', 'Extra column to group queries by');
    this.metricSelect.setAttribute('aria-label', 'Metric to compare per segment');
    this.table = new VirtualTable<Row>({
      id: 'gl-segments-table',
      label: 'Metrics per segment value',
      columns: [],
      source: arraySource(() => this.sorted),
      sort: () => this.sort,
      onSort: (key) => {
        this.sort = toggleSort(this.sort, key);
        this.applySort();
      },
      emptyText: 'No segment values.',
      cellTitle: (c, row) => {
        const v = c.value(row);
        return typeof v === 'number' ? `${c.label} = ${exactValue(v)}\n${c.title}` : String(v ?? c.label);
      },
    });
    this.element.append(
      el('div', { className: 'gl-toolbar' }, col.wrapper, met.wrapper, el('span', { className: 'gl-spacer' }), this.chooser.element,
        button('Markdown', { icon: 'markdown', secondary: true, title: 'Export this table as Markdown', onClick: () => this.export('markdown') }),
        button('CSV', { icon: 'export', secondary: true, title: 'Export this table as CSV', onClick: () => this.export('csv') })),
      this.note,
      this.table.element,
    );
  }

  configure(setup: SegmentsSetup, keep: boolean): void {
    const previous = keep ? this.columnSelect.value : '';
    const previousMetric = keep ? this.metricSelect.value : '';
    this.setup = setup;
    fillSelect(this.columnSelect, setup.columns.map((c) => ({ value: c, text: c })), setup.columns.includes(previous) ? previous : setup.columns[0]);
    fillSelect(this.metricSelect, setup.metrics.map((m) => ({ value: m.key, text: m.label })), previousMetric || setup.metrics[setup.headline]?.key);
    this.metricField.hidden = !setup.compare;
    this.columnSelect.disabled = setup.columns.length === 0;
    this.chooser.setColumns(this.columns(setup));
    this.applyColumns();
    if (setup.columns.length === 0) {
      this.rows = this.sorted = [];
      this.note.textContent = 'This dump has no extra columns to group by. Name them in the gainline.columnsByPattern setting (for example locale or device).';
      this.table.refresh(true);
    } else void this.load();
  }

  private async load(): Promise<void> {
    const setup = this.setup;
    const column = this.columnSelect.value;
    if (!setup || !column) return;
    const token = ++this.token;
    this.note.textContent = `Loading ${column}…`;
    try {
      const table = setup.compare
        ? await this.ctx.request('compareSegments', { column, metric: this.metricSelect.value || undefined })
        : await this.ctx.request('segments', { column });
      if (token !== this.token) return;
      this.rows = table.rows;
      this.note.textContent = `${formatCount(table.rows.length)} values of ${column}.`;
      this.applySort();
    } catch (e) {
      if (token !== this.token) return;
      this.note.textContent = `Could not compute segments: ${(e as Error).message}`;
    }
  }

  private applyColumns(): void {
    if (this.setup) this.table.setColumns(this.chooser.shown(this.columns(this.setup)));
  }

  private applySort(): void {
    const col = this.columns(this.setup!).find((c) => c.key === this.sort.key);
    this.sorted = col ? sortRows(this.rows, col.value, this.sort.descending) : this.rows;
    this.table.refresh();
  }

  private columns(setup: SegmentsSetup): ColumnDef<Row>[] {
    const cols: ColumnDef<Row>[] = [
      { key: 'value', label: this.columnSelect.value || 'Value', title: 'Value of the chosen column.', value: (r) => r.value, sortable: true, width: 2, sticky: true },
      { key: 'queries', label: 'Queries', title: COLUMN_EXPLANATIONS['queries']!, value: (r) => r.queries, format: count, numeric: true, sortable: true, sample: SAMPLES.count },
      {
        key: 'skipped',
        label: 'Skipped',
        title: setup.compare
          ? 'Queries of this segment left out of the comparison of this metric: it is undefined in A or B (nothing relevant, under the “skip” convention). Wins + ties + losses + skipped = queries.'
          : 'Queries of this segment left out of the means: nothing relevant, under the “skip” convention.',
        value: (r) => r.skipped,
        format: count,
        numeric: true,
        sortable: true,
        sample: SAMPLES.count,
      },
    ];
    if (setup.compare) {
      const g = (r: Row) => r as CompareSegmentRow;
      cols.push(
        { key: 'meanA', label: 'Mean A', title: 'Mean of the metric over this segment’s paired queries in run A.', value: (r) => g(r).meanA, format: fixed, numeric: true, sortable: true, sample: SAMPLES.unitFixed },
        { key: 'meanB', label: 'Mean B', title: 'Mean in run B.', value: (r) => g(r).meanB, format: fixed, numeric: true, sortable: true, sample: SAMPLES.unitFixed },
        { key: 'delta', label: 'Δ (B − A)', title: 'Mean B − mean A.', value: (r) => g(r).delta, format: delta, numeric: true, sortable: true, sample: SAMPLES.unitDelta },
        { key: 'wins', label: 'Wins', title: COLUMN_EXPLANATIONS['wins']!, value: (r) => g(r).wins, format: count, numeric: true, sortable: true, sample: SAMPLES.count },
        { key: 'ties', label: 'Ties', title: COLUMN_EXPLANATIONS['ties']!, value: (r) => g(r).ties, format: count, numeric: true, sortable: true, sample: SAMPLES.count },
        { key: 'losses', label: 'Losses', title: COLUMN_EXPLANATIONS['losses']!, value: (r) => g(r).losses, format: count, numeric: true, sortable: true, sample: SAMPLES.count },
        { key: 'interval', label: '95% interval of Δ', title: 'Percentile bootstrap of the segment’s mean Δ, with the comparison’s resamples and seed (as in the A vs B table).', value: (r) => interval(g(r)), numeric: true, sample: '+0.0000 to +0.0000' },
        { key: 'tTestP', label: 'p (t-test)', title: 'Two-sided paired t-test on the segment’s per-query differences. Not adjusted for the number of segments.', value: (r) => g(r).tTestP, format: pValue, numeric: true, sortable: true, sample: SAMPLES.p },
        { key: 'randomizationP', label: 'p (randomization)', title: 'Two-sided paired randomization (sign-flip) test on the segment’s differences, with the comparison’s permutations and seed. Not adjusted for the number of segments.', value: (r) => g(r).randomizationP, format: pValue, numeric: true, sortable: true, sample: SAMPLES.p },
      );
    } else {
      const s = (r: Row) => r as SegmentRow;
      setup.metrics.forEach((m, i) =>
        cols.push({ key: m.key, label: m.label, title: explainMetric(m.key, setup.conventionsSummary), value: (r) => s(r).means[i] ?? null, format: fixed, numeric: true, sortable: true, sample: SAMPLES.unitFixed }),
      );
      cols.push(
        { key: 'headlineDelta', label: 'Δ headline', title: COLUMN_EXPLANATIONS['headlineDelta']!, value: (r) => s(r).headlineDelta, format: delta, numeric: true, sortable: true, sample: SAMPLES.unitDelta },
        { key: 'lossShare', label: 'Share of loss', title: 'Share of the total headline loss carried by this segment’s queries.', value: (r) => s(r).lossShare, format: (v) => (typeof v === 'number' ? formatShare(v) : MISSING), numeric: true, sortable: true, sample: SAMPLES.share, bar: (r) => s(r).lossShare },
      );
    }
    return cols;
  }

  private export(format: 'markdown' | 'csv'): void {
    if (!this.setup) return;
    this.ctx.exportTable(exportParams(`Segments by ${this.columnSelect.value}`, this.columns(this.setup), this.sorted, format, 'file'));
  }
}
