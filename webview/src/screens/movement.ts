/**
 * How one query's ranking moved from run A to run B: both lists side by side with a line per item,
 * each item's rank change, the pairs B fixed or introduced, and how each position's DCG
 * contribution changed.
 */
import type { MovementRow, MovementView, PairChangeView } from '../../../extension/protocol/messages';
import { exportParams, type ColumnDef } from '../model/tableModel';
import { COLUMN_EXPLANATIONS } from '../model/explain';
import { exactValue, formatCount, formatDelta, formatFixed, MISSING } from '../model/format';
import type { AppContext } from '../ui/context';
import { button, clear, el } from '../ui/dom';
import { highlightItem, renderConnector, renderOrderList, type ConnectorLink } from '../ui/orderLists';
import { staticTable } from '../ui/staticTable';

const ROWS = 100;
const PAIRS_LISTED = 50;

export class MovementScreen {
  readonly element = el('div', { id: 'gl-movement' });
  private token = 0;
  private selected: string | null = null;
  private current: string | null = null;

  constructor(private readonly ctx: AppContext, private readonly headlineLabel: () => string) {
    this.empty();
  }

  get query(): string | null {
    return this.current;
  }

  clear(): void {
    this.token++;
    this.current = null;
    this.empty();
  }

  private empty(): void {
    clear(this.element);
    this.element.append(el('p', { className: 'gl-muted', text: 'Pick a query in the differences table or click a point of the scatter to see how its ranking moved.' }));
  }

  async show(query: string): Promise<void> {
    const token = ++this.token;
    if (query !== this.current) this.selected = null;
    this.current = query;
    this.element.setAttribute('aria-busy', 'true');
    try {
      const movement = await this.ctx.request('queryMovement', { query });
      if (token !== this.token) return;
      this.render(movement);
    } catch (e) {
      if (token !== this.token) return;
      clear(this.element);
      this.element.append(el('div', { id: 'gl-movement-query', text: query }), el('p', { className: 'gl-worse', attrs: { role: 'alert' }, text: `Could not load this query: ${(e as Error).message}` }));
    } finally {
      if (token === this.token) this.element.removeAttribute('aria-busy');
    }
  }

  private render(m: MovementView): void {
    clear(this.element);
    const label = this.headlineLabel();
    const delta = m.a !== null && m.b !== null ? m.b - m.a : null;
    this.element.append(
      el('div', { className: 'gl-detail-head' },
        el('span', { id: 'gl-movement-query', className: 'gl-movement-query', text: m.query }),
        el('span', { className: 'gl-chip', text: `${label} A ${m.a === null ? MISSING : formatFixed(m.a)}`, title: `${m.a === null ? 'not defined' : exactValue(m.a)}; DCG@${m.k} ${exactValue(m.dcgA)}` }),
        el('span', { className: 'gl-chip', text: `B ${m.b === null ? MISSING : formatFixed(m.b)}`, title: `${m.b === null ? 'not defined' : exactValue(m.b)}; DCG@${m.k} ${exactValue(m.dcgB)}` }),
        el('span', { className: `gl-chip ${delta === null ? '' : delta > 0 ? 'gl-better' : delta < 0 ? 'gl-worse' : ''}`, text: `Δ ${delta === null ? MISSING : formatDelta(delta)}`, title: 'B − A' })),
      el('div', { className: 'gl-toolbar' },
        button('Copy A as JSON', { icon: 'json', secondary: true, onClick: () => this.ctx.copyQuery(m.query, 'a') }),
        button('Copy B as JSON', { icon: 'json', secondary: true, onClick: () => this.ctx.copyQuery(m.query, 'b') }),
        button('Open in detail', { icon: 'list-ordered', secondary: true, title: 'Show this query’s detail (run A) with the ideal order', onClick: () => this.ctx.openQuery(m.query, 'detail') }),
        button('Markdown', { icon: 'markdown', secondary: true, title: 'Export the items with their positions in A and B as Markdown', onClick: () => this.export(m, 'markdown') }),
        button('CSV', { icon: 'export', secondary: true, title: 'Export the items with their positions in A and B as CSV', onClick: () => this.export(m, 'csv') })),
    );
    this.renderLists(m);
    this.renderPositions(m);
    this.renderPairs(m);
    highlightItem(this.element, this.selected);
  }

  private renderLists(m: MovementView): void {
    const inA = m.rows.filter((r) => r.positionA !== null).sort((x, y) => x.positionA! - y.positionA!);
    const inB = m.rows.filter((r) => r.positionB !== null).sort((x, y) => x.positionB! - y.positionB!);
    const rowsShown = Math.min(ROWS, Math.max(inA.length, inB.length));
    const grade = (v: number | null) => (v === null ? 'unjudged' : String(v));
    const moved = (v: number | null) => (v === null ? 'only A' : v > 0 ? `↑${v}` : v < 0 ? `↓${-v}` : '=');
    const left = renderOrderList(
      {
        id: 'gl-movement-a',
        label: 'Run A order',
        headers: [
          { text: 'Pos', title: 'Position in run A.', numeric: true },
          { text: 'Item', title: 'Item id.' },
          { text: 'Label', title: 'Graded relevance.', numeric: true },
          { text: 'Moved', title: COLUMN_EXPLANATIONS['moved']!, numeric: true },
        ],
        rows: inA.slice(0, rowsShown).map((r) => ({
          item: r.item,
          cells: [
            { text: String(r.positionA), numeric: true },
            { text: r.item, title: r.item },
            { text: grade(r.label), numeric: true },
            { text: moved(r.moved), numeric: true, title: r.positionB === null ? 'Not ranked in B.' : `Position ${r.positionA} in A → ${r.positionB} in B` },
          ],
        })),
      },
      (item) => this.pick(item),
    );
    const right = renderOrderList(
      {
        id: 'gl-movement-b',
        label: 'Run B order',
        headers: [
          { text: 'Pos', title: 'Position in run B.', numeric: true },
          { text: 'Item', title: 'Item id.' },
          { text: 'Label', title: 'Graded relevance.', numeric: true },
          { text: 'Pos in A', title: 'Where run A ranked this item.', numeric: true },
        ],
        rows: inB.slice(0, rowsShown).map((r) => ({
          item: r.item,
          cells: [
            { text: String(r.positionB), numeric: true },
            { text: r.item, title: r.item },
            { text: grade(r.label), numeric: true },
            { text: r.positionA === null ? 'new' : String(r.positionA), numeric: true },
          ],
        })),
      },
      (item) => this.pick(item),
    );
    const links: ConnectorLink[] = m.rows
      .filter((r) => r.positionA !== null && r.positionB !== null)
      .map((r) => ({ item: r.item, position: r.positionA!, idealPosition: r.positionB!, gain: Math.max(0, r.label ?? 0) }));
    this.element.append(
      el('h2', { text: 'Run A beside run B' }),
      el('div', { className: 'gl-legend' },
        el('span', {}, el('span', { className: 'gl-swatch up' }), 'moved up in B'),
        el('span', {}, el('span', { className: 'gl-swatch down' }), 'moved down in B'),
        el('span', {}, el('span', { className: 'gl-swatch same' }), 'same position'),
        el('span', { text: 'Stronger lines: higher grade.' })),
      el('div', { className: 'gl-orders movement' }, left, el('div', {}, renderConnector(links, rowsShown, 'Lines joining each item’s position in A to its position in B')), right),
    );
    if (rowsShown < Math.max(inA.length, inB.length)) this.element.append(el('p', { className: 'gl-muted', text: `Showing the first ${rowsShown} positions of ${Math.max(inA.length, inB.length)}.` }));
  }

  private renderPositions(m: MovementView): void {
    const maxChange = Math.max(1e-12, ...m.positions.map((p) => Math.abs(p.change)));
    const list = renderOrderList(
      {
        id: 'gl-movement-positions',
        label: `DCG contribution per position, A and B, positions 1 to ${m.k}`,
        headers: [
          { text: 'Pos', title: 'Position in the list.', numeric: true },
          { text: 'Item in A', title: 'What run A put at this position.' },
          { text: 'Contr. A', title: 'gain × discount of that item in A.', numeric: true },
          { text: 'Item in B', title: 'What run B put at this position.' },
          { text: 'Contr. B', title: 'gain × discount of that item in B.', numeric: true },
          { text: 'Change (B − A)', title: 'Contribution in B minus contribution in A at this position: where B gains or loses DCG.' },
        ],
        rows: m.positions.map((p) => ({
          item: p.itemB || p.itemA,
          cells: [
            { text: String(p.position), numeric: true },
            { text: p.itemA || MISSING, title: p.itemA },
            { text: formatFixed(p.contributionA, 3), numeric: true, title: exactValue(p.contributionA) },
            { text: p.itemB || MISSING, title: p.itemB },
            { text: formatFixed(p.contributionB, 3), numeric: true, title: exactValue(p.contributionB) },
            { text: formatDelta(p.change, 3), bar: Math.abs(p.change) / maxChange, barRole: p.change > 0 ? 'better' : p.change < 0 ? 'worse' : undefined, title: `${exactValue(p.change)} (${p.change >= 0 ? 'B gains' : 'B loses'} here)` },
          ],
        })),
      },
      (item) => this.pick(item),
    );
    this.element.append(
      el('h2', { text: `DCG contribution by position (1–${m.k})` }),
      el('p', { className: 'gl-muted', text: `DCG@${m.k}: A ${formatFixed(m.dcgA)}, B ${formatFixed(m.dcgB)}; the changes below sum to the difference.` }),
      list,
    );
  }

  private renderPairs(m: MovementView): void {
    const pairTable = (id: string, caption: string, pairs: readonly PairChangeView[], total: number) =>
      pairs.length === 0
        ? el('p', { id, className: 'gl-muted', text: 'None.' })
        : el('div', {},
            staticTable({
              id,
              caption,
              columns: [
                { label: 'Better-graded item' },
                { label: 'Worse-graded item' },
                { label: 'NDCG recovered', numeric: true, title: COLUMN_EXPLANATIONS['ndcgRecovered']! },
              ],
              rows: pairs.slice(0, PAIRS_LISTED).map((p) => [{ text: p.higherGraded, title: p.higherGraded }, { text: p.lowerGraded, title: p.lowerGraded }, { text: formatFixed(p.ndcgRecovered), title: exactValue(p.ndcgRecovered) }]),
            }),
            total > Math.min(PAIRS_LISTED, pairs.length) ? el('p', { className: 'gl-muted', text: `First ${formatCount(Math.min(PAIRS_LISTED, pairs.length))} of ${formatCount(total)}.` }) : null);
    this.element.append(
      el('h2', { text: 'Pairs' }),
      el('p', {
        className: 'gl-muted',
        text: `Inverted pairs (better-graded item ranked below a worse-graded one): ${formatCount(m.invertedTotalA)} in A, ${formatCount(m.invertedTotalB)} in B; ${formatCount(m.keptPairs)} inverted in both.${m.droppedPairs > 0 ? ` ${formatCount(m.droppedPairs)} pairs involve an item ranked in only one run and are not compared.` : ''}`,
      }),
      el('div', { className: 'gl-grid2' },
        el('section', {}, el('h2', { className: 'gl-better', text: `Fixed by B (${formatCount(m.fixedTotal)})` }), pairTable('gl-pairs-fixed', 'Pairs inverted in A and in order in B', m.fixedPairs, m.fixedTotal)),
        el('section', {}, el('h2', { className: 'gl-worse', text: `Introduced by B (${formatCount(m.introducedTotal)})` }), pairTable('gl-pairs-introduced', 'Pairs in order in A and inverted in B', m.introducedPairs, m.introducedTotal))),
    );
  }

  private export(m: MovementView, format: 'markdown' | 'csv'): void {
    const columns: ColumnDef<MovementRow>[] = [
      { key: 'item', label: 'Item', title: '', value: (r) => r.item },
      { key: 'label', label: 'Label', title: '', value: (r) => r.label },
      { key: 'positionA', label: 'Position in A', title: '', value: (r) => r.positionA },
      { key: 'positionB', label: 'Position in B', title: '', value: (r) => r.positionB },
      { key: 'moved', label: 'Moved up in B by', title: '', value: (r) => r.moved },
    ];
    this.ctx.exportTable(exportParams(`Movement of ${m.query}`, columns, m.rows, format, 'file'));
  }

  private pick(item: string): void {
    this.selected = this.selected === item ? null : item;
    highlightItem(this.element, this.selected);
  }
}
