/** Small, fully shown tables (sensitivity, degenerate counts): plain <table> with header tooltips. */
import { el } from './dom';

export interface StaticColumn {
  readonly label: string;
  readonly title?: string;
  readonly numeric?: boolean;
}

export interface StaticCell {
  readonly text: string;
  readonly title?: string;
  readonly className?: string;
}

export function staticTable(options: { id?: string; caption: string; columns: readonly StaticColumn[]; rows: readonly (readonly (StaticCell | string)[])[] }): HTMLTableElement {
  const table = el('table', { id: options.id, className: 'gl-table', attrs: { 'aria-label': options.caption } });
  const head = el('tr');
  for (const c of options.columns) head.appendChild(el('th', { text: c.label, title: c.title, className: c.numeric ? 'num' : undefined, attrs: { scope: 'col' } }));
  table.appendChild(el('thead', {}, head));
  const body = el('tbody');
  for (const row of options.rows) {
    const tr = el('tr');
    row.forEach((cell, i) => {
      const c = typeof cell === 'string' ? { text: cell } : cell;
      const numeric = options.columns[i]?.numeric;
      tr.appendChild(el('td', { text: c.text, title: c.title, className: [numeric ? 'num' : '', c.className ?? ''].join(' ').trim() || undefined }));
    });
    body.appendChild(tr);
  }
  table.appendChild(body);
  return table;
}
