/**
 * Two ranked lists side by side with a connector column between them: each item's line joins its
 * row on the left to its row on the right. Used for predicted vs ideal (detail) and run A vs run B
 * (movement). Rows have a fixed height so the line geometry is a pure function of positions.
 */
import { fittedTemplate } from '../model/columnLayout';
import { lineSegments, segmentPath, type OrderLink } from '../model/orderLines';
import { clear, el } from './dom';

export const ORDER_ROW_HEIGHT = 22;
/** Width of the strip between the lists (styles.css: .gl-orders, second column). */
const CONNECTOR_WIDTH = 96;
/** A cell's horizontal padding (styles.css: .gl-order-row > span, 0 4px). */
const ORDER_CELL_PADDING_PX = 8;
const SVG_NS = 'http://www.w3.org/2000/svg';

export interface OrderCell {
  readonly text: string;
  readonly title?: string;
  readonly numeric?: boolean;
  /** Also draw a bar of this fraction (0..1) beside the text. */
  readonly bar?: number;
  readonly barRole?: 'better' | 'worse';
}

export interface OrderRowSpec {
  readonly item: string;
  readonly cells: readonly OrderCell[];
  readonly className?: string;
  readonly title?: string;
}

export interface OrderListSpec {
  readonly id: string;
  readonly label: string;
  readonly headers: readonly { text: string; title: string; numeric?: boolean }[];
  readonly rows: readonly OrderRowSpec[];
}

export function renderOrderList(spec: OrderListSpec, onPick: (item: string) => void): HTMLElement {
  const list = el('div', { id: spec.id, className: 'gl-order', attrs: { role: 'table', 'aria-label': `${spec.label} (arrow keys select an item)`, tabindex: 0 } });
  // Columns fitted to every text shown, so positions, scores and contributions are never cut.
  const layout = fittedTemplate(
    spec.headers.map((h, i) => ({
      header: h.text,
      texts: spec.rows.map((r) => r.cells[i]?.text ?? ''),
      kind: h.numeric ? 'number' : spec.rows.some((r) => r.cells[i]?.bar !== undefined) ? 'bar' : 'text',
    })),
    ORDER_CELL_PADDING_PX,
  );
  list.style.setProperty('--gl-order-cols', layout.columns);
  list.style.setProperty('--gl-order-min', layout.minWidth);
  const head = el('div', { className: 'gl-order-head', attrs: { role: 'row' } });
  for (const h of spec.headers) head.appendChild(el('span', { text: h.text, title: h.title, className: h.numeric ? 'num' : undefined, attrs: { role: 'columnheader' } }));
  list.appendChild(head);
  const frag = document.createDocumentFragment();
  for (const r of spec.rows) {
    const row = el('div', { className: `gl-order-row${r.className ? ` ${r.className}` : ''}`, title: r.title, attrs: { role: 'row', tabindex: -1 } });
    row.dataset['item'] = r.item;
    for (const c of r.cells) {
      const cell = el('span', { className: c.numeric ? 'num' : undefined, title: c.title, attrs: { role: 'cell' } });
      if (c.bar !== undefined) {
        const track = el('span', { className: `gl-contrib${c.barRole ? ` ${c.barRole}` : ''}`, attrs: { 'aria-hidden': 'true' } });
        const fill = el('span');
        fill.style.width = `${Math.max(0, Math.min(1, c.bar)) * 100}%`;
        track.appendChild(fill);
        cell.classList.add('gl-barcell');
        cell.append(el('span', { className: 'gl-bartext', text: c.text }), track);
      } else cell.textContent = c.text;
      row.appendChild(cell);
    }
    frag.appendChild(row);
  }
  list.appendChild(frag);
  list.addEventListener('click', (e) => {
    const row = (e.target as HTMLElement).closest<HTMLElement>('.gl-order-row');
    const item = row?.dataset['item'];
    if (item !== undefined) onPick(item);
  });
  // Keyboard: Up/Down move the selected item within this list, so the lines can be followed without a mouse.
  list.addEventListener('keydown', (e) => {
    if (e.key !== 'ArrowDown' && e.key !== 'ArrowUp') return;
    e.preventDefault();
    const rows = [...list.querySelectorAll<HTMLElement>('.gl-order-row')];
    const current = rows.findIndex((r) => r.classList.contains('selected'));
    const next = Math.max(0, Math.min(rows.length - 1, current < 0 ? 0 : current + (e.key === 'ArrowDown' ? 1 : -1)));
    const row = rows[next];
    const item = row?.dataset['item'];
    if (!row || item === undefined || next === current) return;
    onPick(item);
    row.scrollIntoView({ block: 'nearest' });
  });
  return list;
}

export interface ConnectorLink extends OrderLink {
  readonly item: string;
}

/** The SVG between the lists. `rowsShown` rows are drawn under a header of one row height. */
export function renderConnector(links: readonly ConnectorLink[], rowsShown: number, label: string): SVGSVGElement {
  const width = CONNECTOR_WIDTH;
  const height = (rowsShown + 1) * ORDER_ROW_HEIGHT + 6;
  const svg = document.createElementNS(SVG_NS, 'svg');
  svg.setAttribute('class', 'gl-links');
  svg.setAttribute('width', String(width));
  svg.setAttribute('height', String(height));
  svg.setAttribute('viewBox', `0 0 ${width} ${height}`);
  svg.setAttribute('role', 'img');
  svg.setAttribute('aria-label', label);
  const segments = lineSegments(links, { rowHeight: ORDER_ROW_HEIGHT, width, rowsShown, top: ORDER_ROW_HEIGHT });
  const byPosition = new Map(links.map((l) => [l.position, l.item]));
  // Lines that carry nothing are drawn first, thin and faint; the ones that cost the most go on top.
  const drawOrder = [...segments].sort((x, y) => rank(x) - rank(y));
  for (const s of drawOrder) {
    const path = document.createElementNS(SVG_NS, 'path');
    path.setAttribute('d', segmentPath(s));
    const quiet = s.direction === 'same' || s.weight === 0;
    path.setAttribute('class', `${quiet ? 'same quiet' : s.direction}${s.clipped ? ' clipped' : ''}`);
    path.setAttribute('stroke-opacity', quiet ? '0.3' : String(0.55 + 0.45 * s.weight));
    path.setAttribute('stroke-width', quiet ? '0.8' : String(1.2 + 1.6 * s.weight));
    const item = byPosition.get(s.position) ?? '';
    path.dataset['item'] = item;
    const title = document.createElementNS(SVG_NS, 'title');
    title.textContent = `${item}: position ${s.position} → ${s.idealPosition}`;
    path.appendChild(title);
    svg.appendChild(path);
  }
  return svg;
}

function rank(s: { direction: string; weight: number }): number {
  return s.direction === 'same' ? -1 : s.weight;
}

/** Highlights one item's rows and line across the lists inside `root`. */
export function highlightItem(root: HTMLElement, item: string | null): void {
  for (const node of root.querySelectorAll<HTMLElement | SVGElement>('.gl-order-row.selected, .gl-links path.selected')) node.classList.remove('selected');
  if (item === null) return;
  for (const node of root.querySelectorAll<HTMLElement | SVGElement>('.gl-order-row, .gl-links path')) {
    if (node.dataset['item'] === item) node.classList.add('selected');
  }
}

export function resetChildren(node: HTMLElement, ...children: Node[]): void {
  clear(node);
  node.append(...children);
}
