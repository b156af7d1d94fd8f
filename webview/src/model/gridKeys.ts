/**
 * Keyboard navigation of a virtual grid, as a pure state machine: given the active row, the key
 * pressed and the table's size, what becomes active and whether to open it. Follows the WAI-ARIA
 * grid pattern's row keys (W3C ARIA Authoring Practices, "Grid" pattern: arrows move one row,
 * Page Up/Down by a viewport, Home/End — with Ctrl in a grid with columns — to the ends).
 */

export interface GridKeyInput {
  readonly key: string;
  readonly ctrlKey?: boolean;
  readonly metaKey?: boolean;
}

export interface GridNavState {
  /** Active row index, or -1 when nothing is active yet. */
  readonly active: number;
  readonly total: number;
  /** Rows that fit in the viewport (the Page Up/Down step). */
  readonly pageRows: number;
}

export interface GridKeyResult {
  readonly active: number;
  /** Enter on an active row: open it. */
  readonly open: boolean;
  /** False when the key is not ours (let the browser handle it). */
  readonly handled: boolean;
}

export function navigate(state: GridNavState, input: GridKeyInput): GridKeyResult {
  const { total } = state;
  const last = total - 1;
  const step = Math.max(1, Math.floor(state.pageRows) - 1);
  const from = state.active;
  const clamp = (i: number): number => (total === 0 ? -1 : Math.min(last, Math.max(0, i)));
  switch (input.key) {
    case 'ArrowDown':
      return moved(clamp(from < 0 ? 0 : from + 1));
    case 'ArrowUp':
      return moved(clamp(from < 0 ? 0 : from - 1));
    case 'PageDown':
      return moved(clamp(from < 0 ? 0 : from + step));
    case 'PageUp':
      return moved(clamp(from < 0 ? 0 : from - step));
    case 'Home':
      return moved(clamp(0));
    case 'End':
      return moved(clamp(last));
    case 'Enter':
    case ' ':
      return { active: from, open: from >= 0 && from < total, handled: from >= 0 };
    default:
      return { active: from, open: false, handled: false };
  }
}

function moved(active: number): GridKeyResult {
  return { active, open: false, handled: true };
}
