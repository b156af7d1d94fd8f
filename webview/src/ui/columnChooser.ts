/**
 * "Columns" button and its checklist: which columns of a grid are shown. Sticky leading columns
 * (position, query) always stay. The choice lasts while the view is open, across reloads of the data.
 */
import { el, icon } from './dom';

export interface ChoosableColumn {
  readonly key: string;
  readonly label: string;
  readonly sticky?: boolean;
}

export class ColumnChooser {
  readonly element: HTMLElement;
  private readonly toggle: HTMLButtonElement;
  private readonly menu: HTMLElement;
  private readonly hidden = new Set<string>();

  constructor(id: string, private readonly onChange: () => void) {
    this.toggle = el('button', {
      id,
      className: 'gl-button secondary',
      title: 'Choose the columns shown',
      attrs: { type: 'button', 'aria-haspopup': 'true', 'aria-expanded': 'false', 'aria-controls': `${id}-menu` },
    }, icon('list-selection'), 'Columns');
    this.menu = el('div', { id: `${id}-menu`, className: 'gl-menu', attrs: { role: 'group', 'aria-label': 'Columns shown' } });
    this.menu.hidden = true;
    this.element = el('div', { className: 'gl-menu-anchor' }, this.toggle, this.menu);
    this.toggle.addEventListener('click', () => this.setOpen(this.menu.hidden));
    this.element.addEventListener('keydown', (e) => {
      if (e.key === 'Escape' && !this.menu.hidden) {
        e.stopPropagation();
        this.setOpen(false);
        this.toggle.focus();
      }
    });
    document.addEventListener('mousedown', (e) => {
      if (!this.menu.hidden && !this.element.contains(e.target as Node)) this.setOpen(false);
    });
  }

  /** Lists the columns that can be hidden; keeps earlier choices for keys still present. */
  setColumns(columns: readonly ChoosableColumn[]): void {
    this.menu.replaceChildren();
    for (const c of columns) {
      if (c.sticky) continue;
      const box = el('input', { attrs: { type: 'checkbox' } });
      box.dataset['column'] = c.key;
      box.checked = !this.hidden.has(c.key);
      box.addEventListener('change', () => {
        if (box.checked) this.hidden.delete(c.key);
        else this.hidden.add(c.key);
        this.onChange();
      });
      this.menu.appendChild(el('label', { className: 'gl-menu-item' }, box, c.label));
    }
  }

  /** The columns to show, in their order. */
  shown<T extends ChoosableColumn>(columns: readonly T[]): T[] {
    return columns.filter((c) => c.sticky || !this.hidden.has(c.key));
  }

  private setOpen(open: boolean): void {
    this.menu.hidden = !open;
    this.toggle.setAttribute('aria-expanded', String(open));
    if (open) this.menu.querySelector<HTMLInputElement>('input')?.focus();
  }
}
