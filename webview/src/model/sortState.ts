/**
 * Sort and filter state of the tables. Clicking a header sorts by it; clicking it again flips the
 * direction. Each key starts in the direction that puts the interesting rows first: worst metric
 * values (ascending), biggest loss share / inversion cost (descending), biggest regression (delta
 * ascending).
 */

export interface SortState {
  readonly key: string;
  readonly descending: boolean;
}

/** Keys whose large values are the interesting ones. */
const DESCENDING_FIRST = new Set(['lossShare', 'inversionCost', 'inversions', 'items', 'relevant', 'queries', 'losses', 'wins']);

export function defaultDirection(key: string): boolean {
  return DESCENDING_FIRST.has(key);
}

export function toggleSort(current: SortState, key: string): SortState {
  if (current.key === key) return { key, descending: !current.descending };
  return { key, descending: defaultDirection(key) };
}

/** `aria-sort` value for a header. */
export function ariaSort(current: SortState, key: string): 'ascending' | 'descending' | 'none' {
  if (current.key !== key) return 'none';
  return current.descending ? 'descending' : 'ascending';
}

/** The filter as sent to the host: trimmed; empty means no filter. */
export function normalizeFilter(text: string): string | undefined {
  const t = text.trim();
  return t.length === 0 ? undefined : t;
}

/**
 * Compare two cell values for a small, fully-loaded table (segments, compare overview). Missing
 * values (null/NaN) go last whatever the direction, as the host does for paged tables, so flipping
 * the direction never buries the real rows under empty ones. Strings compare naturally ("q2" < "q10").
 */
export function compareCells(a: unknown, b: unknown, descending: boolean): number {
  const aMissing = isMissing(a);
  const bMissing = isMissing(b);
  if (aMissing || bMissing) return aMissing === bMissing ? 0 : aMissing ? 1 : -1;
  let c: number;
  if (typeof a === 'number' && typeof b === 'number') c = a < b ? -1 : a > b ? 1 : 0;
  else c = COLLATOR.compare(String(a), String(b));
  return descending ? -c : c;
}

const COLLATOR = new Intl.Collator('en', { numeric: true, sensitivity: 'base' });

function isMissing(v: unknown): boolean {
  return v === null || v === undefined || (typeof v === 'number' && Number.isNaN(v));
}

/** Sorts rows by the cell `pick` returns; stable, so equal keys keep the host's order. */
export function sortRows<Row>(rows: readonly Row[], pick: (row: Row) => unknown, descending: boolean): Row[] {
  return rows
    .map((row, i) => ({ row, i, v: pick(row) }))
    .sort((x, y) => compareCells(x.v, y.v, descending) || x.i - y.i)
    .map((x) => x.row);
}
