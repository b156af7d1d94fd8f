/**
 * Tiny element builder. Data only ever reaches the page as text (textContent or attribute values),
 * never as markup, so an item id such as `<img src=x onerror=alert(1)>` shows as those characters.
 */

type Child = Node | string | null | undefined | false;

export interface ElementOptions {
  readonly id?: string;
  readonly className?: string;
  readonly text?: string;
  readonly title?: string;
  readonly attrs?: Readonly<Record<string, string | number | boolean | undefined>>;
  readonly dataset?: Readonly<Record<string, string>>;
}

export function el<K extends keyof HTMLElementTagNameMap>(tag: K, options?: ElementOptions, ...children: Child[]): HTMLElementTagNameMap[K];
export function el(tag: string, options?: ElementOptions, ...children: Child[]): HTMLElement;
export function el(tag: string, options: ElementOptions = {}, ...children: Child[]): HTMLElement {
  const node = document.createElement(tag);
  if (options.id) node.id = options.id;
  if (options.className) node.className = options.className;
  if (options.text !== undefined) node.textContent = options.text;
  if (options.title) node.title = options.title;
  if (options.attrs) {
    for (const [name, value] of Object.entries(options.attrs)) {
      if (value === undefined || value === false) continue;
      node.setAttribute(name, value === true ? '' : String(value));
    }
  }
  if (options.dataset) for (const [k, v] of Object.entries(options.dataset)) node.dataset[k] = v;
  append(node, ...children);
  return node;
}

export function append(parent: Node, ...children: Child[]): void {
  for (const c of children) {
    if (c === null || c === undefined || c === false) continue;
    parent.appendChild(typeof c === 'string' ? document.createTextNode(c) : c);
  }
}

export function clear(node: Node): void {
  while (node.firstChild) node.removeChild(node.firstChild);
}

/** A codicon glyph (the host loads the codicons stylesheet). Decorative: hidden from screen readers. */
export function icon(name: string): HTMLElement {
  return el('span', { className: `codicon codicon-${name}`, attrs: { 'aria-hidden': 'true' } });
}

/** A native button styled like VS Code's; native so keyboard, focus and test drivers behave as expected. */
export function button(label: string, options: { id?: string; icon?: string; title?: string; secondary?: boolean; onClick: () => void }): HTMLButtonElement {
  const b = el('button', {
    id: options.id,
    className: options.secondary ? 'gl-button secondary' : 'gl-button',
    title: options.title,
    attrs: { type: 'button' },
  });
  if (options.icon) b.appendChild(icon(options.icon));
  b.appendChild(document.createTextNode(label));
  b.addEventListener('click', options.onClick);
  return b;
}

/** A labelled native <select>. */
export function select(
  options: { id?: string; label: string; values: readonly { value: string; text: string }[]; selected?: string },
  onChange: (value: string) => void,
): { wrapper: HTMLElement; select: HTMLSelectElement } {
  const s = el('select', { id: options.id, className: 'gl-select', attrs: { 'aria-label': options.label } });
  fillSelect(s, options.values, options.selected);
  s.addEventListener('change', () => onChange(s.value));
  const wrapper = el('label', { className: 'gl-field' }, el('span', { className: 'gl-field-label', text: options.label }), s);
  return { wrapper, select: s };
}

export function fillSelect(s: HTMLSelectElement, values: readonly { value: string; text: string }[], selected?: string): void {
  clear(s);
  for (const v of values) {
    const o = el('option', { text: v.text });
    o.value = v.value;
    if (v.value === selected) o.selected = true;
    s.appendChild(o);
  }
}

/** A horizontal bar for a value in [0, 1], drawn with a width style (CSSOM, allowed under the CSP). */
export function bar(fraction: number | null, className = 'gl-bar'): HTMLElement {
  const outer = el('span', { className: `${className}-track`, attrs: { 'aria-hidden': 'true' } });
  const inner = el('span', { className });
  inner.style.width = `${Math.max(0, Math.min(1, fraction ?? 0)) * 100}%`;
  outer.appendChild(inner);
  return outer;
}

/** Runs `work` once the page has painted what is in it now (the frame's callbacks run before its paint). */
export function afterPaint(work: () => void): void {
  requestAnimationFrame(() => setTimeout(work, 0));
}
