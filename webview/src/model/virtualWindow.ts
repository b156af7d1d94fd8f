/**
 * Which rows of a long table are in the DOM. The scroll area is sized to the whole table, but only
 * the rows crossing the viewport (plus a little overscan) are created, so 100k rows cost the same
 * as 30. Browsers cap an element's height (a few tens of millions of px), so very long tables are
 * scaled: the scroll position maps proportionally onto the row range.
 */

/** Well under every engine's maximum element height. */
export const MAX_SCROLL_HEIGHT = 8_000_000;

export interface WindowInput {
  readonly scrollTop: number;
  readonly viewportHeight: number;
  readonly rowHeight: number;
  readonly total: number;
  /** Extra rows above and below the viewport, to hide blank flashes while scrolling fast. */
  readonly overscan?: number;
}

export interface RowWindow {
  /** First row index rendered (inclusive). */
  readonly first: number;
  /** One past the last row rendered. */
  readonly end: number;
  /** Pixel offset (from the top of the scroll content) at which row `first` is drawn. */
  readonly offsetTop: number;
  /** Height of the scroll content. */
  readonly contentHeight: number;
}

export function contentHeightFor(total: number, rowHeight: number): number {
  return Math.min(total * rowHeight, MAX_SCROLL_HEIGHT);
}

/** The row drawn at the top edge of the viewport for a scroll position (fractional in scaled mode). */
function topRowAt(scrollTop: number, viewportHeight: number, rowHeight: number, total: number): number {
  const natural = total * rowHeight;
  const content = contentHeightFor(total, rowHeight);
  if (natural <= content) return scrollTop / rowHeight;
  const scrollRange = content - viewportHeight;
  const rowRange = total - viewportHeight / rowHeight;
  if (scrollRange <= 0 || rowRange <= 0) return 0;
  return (Math.min(Math.max(scrollTop, 0), scrollRange) / scrollRange) * rowRange;
}

export function computeWindow(input: WindowInput): RowWindow {
  const { viewportHeight, rowHeight, total } = input;
  const overscan = input.overscan ?? 6;
  const contentHeight = contentHeightFor(total, rowHeight);
  if (total <= 0 || rowHeight <= 0) return { first: 0, end: 0, offsetTop: 0, contentHeight: 0 };
  const scrollTop = Math.max(0, input.scrollTop);
  const scaled = total * rowHeight > contentHeight;
  const top = topRowAt(scrollTop, viewportHeight, rowHeight, total);
  const visibleFirst = Math.floor(top);
  // Unscaled: divide once, so an exact row boundary is not pushed over by rounding.
  const visibleEnd = scaled ? Math.ceil(top + viewportHeight / rowHeight) : Math.ceil((scrollTop + viewportHeight) / rowHeight);
  const first = Math.max(0, Math.min(total, visibleFirst) - overscan);
  const end = Math.min(total, Math.max(visibleEnd, visibleFirst + 1) + overscan);
  // In scaled mode rows are placed relative to the viewport, so the top row lands where it should.
  const offsetTop = scaled ? scrollTop - (top - first) * rowHeight : first * rowHeight;
  return { first, end, offsetTop, contentHeight };
}

/** The scrollTop that shows row `index` fully, moving as little as possible (for keyboard navigation). */
export function scrollTopToReveal(index: number, scrollTop: number, viewportHeight: number, rowHeight: number, total: number): number {
  const natural = total * rowHeight;
  if (natural > contentHeightFor(total, rowHeight)) {
    // Scaled: invert topRowAt so the row sits at the same relative place it would have unscaled.
    const rowsInView = viewportHeight / rowHeight;
    const top = topRowAt(scrollTop, viewportHeight, rowHeight, total);
    let wantTop = top;
    if (index < top) wantTop = index;
    else if (index + 1 > top + rowsInView) wantTop = index + 1 - rowsInView;
    const scrollRange = contentHeightFor(total, rowHeight) - viewportHeight;
    const rowRange = total - rowsInView;
    return rowRange <= 0 ? 0 : (wantTop / rowRange) * scrollRange;
  }
  const rowTop = index * rowHeight;
  if (rowTop < scrollTop) return rowTop;
  if (rowTop + rowHeight > scrollTop + viewportHeight) return rowTop + rowHeight - viewportHeight;
  return scrollTop;
}

/** Page numbers (of `pageSize` rows) that cover rows [first, end). */
export function pagesCovering(first: number, end: number, pageSize: number): number[] {
  if (end <= first) return [];
  const pages: number[] = [];
  for (let p = Math.floor(first / pageSize); p <= Math.floor((end - 1) / pageSize); p++) pages.push(p);
  return pages;
}
